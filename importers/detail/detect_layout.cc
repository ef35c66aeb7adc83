// Finding where the plate table starts and which layout it has.
#include <algorithm>

#include "importers/detail/table_readers.h"

namespace ratewell::detail {

int ColumnNumberCount(const std::vector<std::string_view>& cells) {
  const std::size_t used = UsedCells(cells);
  if (used < 2) return 0;
  for (std::size_t i = 1; i < used; ++i) {
    const std::string_view cell = Trim(cells[i]);
    if (cell.empty() || cell.size() > 3) return 0;
    int number = 0;
    for (char c : cell) {
      if (c < '0' || c > '9') return 0;
      number = number * 10 + (c - '0');
    }
    if (number != static_cast<int>(i)) return 0;
  }
  return static_cast<int>(used) - 1;
}

int GridRowsForColumns(int columns) {
  switch (columns) {
    case 12:
      return 8;
    case 24:
      return 16;
    case 48:
      return 32;
    default:
      return 0;
  }
}

namespace {

// The column of the first cell with the given role, or -1.
int FindRole(const std::vector<std::string_view>& cells, ColumnRole role) {
  for (std::size_t i = 0; i < cells.size(); ++i) {
    if (ClassifyHeader(cells[i]) == role) return static_cast<int>(i);
  }
  return -1;
}

bool IsTimeCell(std::string_view cell) {
  cell = Trim(cell);
  if (cell.empty()) return false;
  return ParseTimeMinutes(cell, TimeUnit::kAuto, false).has_value() ||
         ParseTimeMinutes(cell, TimeUnit::kAuto, true).has_value();
}

// What a header row promises the row below it holds.
struct Candidate {
  TableLayout layout = TableLayout::kAuto;
  int key_column = 0;  // well column (long), time column (wide), label column (grid)
  // Every column the layout needs is there (a long header also names a value
  // column). A header with nothing below it must be complete to count.
  bool complete = true;
};

std::optional<Candidate> HeaderCandidate(const std::vector<std::string_view>& cells,
                                         TableLayout wanted) {
  const bool any = wanted == TableLayout::kAuto;
  if ((any || wanted == TableLayout::kGrid) && GridRowsForColumns(ColumnNumberCount(cells)) > 0) {
    return Candidate{TableLayout::kGrid, 0};
  }
  if (UsedCells(cells) < 2) return std::nullopt;
  const int time_column = FindRole(cells, ColumnRole::kTime);
  if (time_column < 0) return std::nullopt;
  const int well_column = FindRole(cells, ColumnRole::kWell);
  if (well_column >= 0) {
    if (any || wanted == TableLayout::kLong) {
      return Candidate{TableLayout::kLong, well_column, FindRole(cells, ColumnRole::kValue) >= 0};
    }
    return std::nullopt;
  }
  if (any || wanted == TableLayout::kWide) {
    const bool has_well_header = std::any_of(cells.begin(), cells.end(), [](std::string_view c) {
      return ParseWellHeader(c, false).has_value() || ParseWellHeader(c, true).has_value();
    });
    if (has_well_header) return Candidate{TableLayout::kWide, time_column};
  }
  return std::nullopt;
}

bool RowFitsCandidate(const std::vector<std::string_view>& cells, const Candidate& candidate) {
  if (static_cast<std::size_t>(candidate.key_column) >= cells.size()) return false;
  const std::string_view key = cells[candidate.key_column];
  switch (candidate.layout) {
    case TableLayout::kLong:
      return LooksLikeWellName(key);
    case TableLayout::kWide:
      return IsTimeCell(key);
    case TableLayout::kGrid:
      return ParseRowLabel(key) == 0;
    case TableLayout::kAuto:
      break;
  }
  return false;
}

}  // namespace

bool IsHeaderRowOf(const std::vector<std::string_view>& cells, TableLayout layout) {
  const std::optional<Candidate> candidate = HeaderCandidate(cells, layout);
  return candidate && candidate->layout == layout;
}

std::optional<TableStart> FindTableStart(const Table& table, TableLayout wanted) {
  std::vector<std::string_view> cells;
  const std::size_t rows = table.num_rows();
  for (std::size_t row = 0; row < rows; ++row) {
    table.GetRow(row, &cells);
    const std::optional<Candidate> candidate = HeaderCandidate(cells, wanted);
    if (!candidate) continue;
    // The next non-blank row must look like data, if there is one.
    std::size_t next = row + 1;
    while (next < rows) {
      table.GetRow(next, &cells);
      if (!IsBlankRow(cells)) break;
      ++next;
    }
    if (next == rows ? candidate->complete : RowFitsCandidate(cells, *candidate)) {
      return TableStart{candidate->layout, row};
    }
  }
  return std::nullopt;
}

}  // namespace ratewell::detail
