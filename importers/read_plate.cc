// ReadPlateFile / ReadPlateBytes: bytes -> table -> layout -> reader -> Plate.
#include "importers/read_plate.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <memory>
#include <utility>

#include "importers/detail/cells.h"
#include "importers/detail/table_readers.h"
#include "importers/detail/text_table.h"
#include "importers/detail/xlsx.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

// Rows below the header whose cells decide whether numbers use a decimal comma.
constexpr std::size_t kDecimalSampleRows = 200;

bool SampleUsesDecimalComma(const detail::Table& table, std::size_t header_row, char delimiter) {
  std::vector<std::string> sample;
  std::vector<std::string_view> cells;
  const std::size_t end = std::min(table.num_rows(), header_row + 1 + kDecimalSampleRows);
  for (std::size_t row = header_row + 1; row < end; ++row) {
    table.GetRow(row, &cells);
    for (std::string_view cell : cells) {
      if (!cell.empty()) sample.emplace_back(cell);
    }
  }
  const std::vector<std::string_view> views(sample.begin(), sample.end());
  return detail::DetectDecimalComma(views, delimiter);
}

std::string ExpectedTable(TableLayout layout) {
  switch (layout) {
    case TableLayout::kLong:
      return "a header row naming a well column, a time column and a value column "
             "(e.g. 'Well,Time (s),A340') above one row per well and time";
    case TableLayout::kWide:
      return "a header row naming a time column and well columns (e.g. 'Time (s),A01,A02') "
             "above one row per read";
    case TableLayout::kGrid:
      return "blocks of plate rows A, B, ... under a row of column numbers 1 to 12, 24 or 48, "
             "each headed by its read time";
    case TableLayout::kAuto:
      break;
  }
  return "a long table (header 'Well,Time (s),A340'), a wide table (header "
         "'Time (s),A01,A02,...') or grid blocks (column numbers 1 to 12 above rows A to H)";
}

// Reads a table whose report fields other than format are filled in base.
Plate ReadTable(const detail::Table& table, char delimiter, const std::string& name,
                const ReadOptions& options, ImportReport base) {
  const std::optional<detail::TableStart> start = detail::FindTableStart(table, options.layout);
  if (!start) {
    const std::string what =
        options.layout == TableLayout::kAuto
            ? std::string("no plate table found")
            : std::string("no ") + TableLayoutToString(options.layout) + " table found";
    throw InputError(name, 0, 0, what + "; expected " + ExpectedTable(options.layout));
  }
  const bool decimal_comma = SampleUsesDecimalComma(table, start->header_row, delimiter);
  const detail::ReaderContext context{table, name, options, decimal_comma};
  Plate plate;
  switch (start->layout) {
    case TableLayout::kLong:
      plate = detail::ReadLongTable(context, start->header_row);
      break;
    case TableLayout::kWide:
      plate = detail::ReadWideTable(context, start->header_row);
      break;
    case TableLayout::kGrid:
      plate = detail::ReadGridTable(context, start->header_row);
      break;
    case TableLayout::kAuto:
      break;
  }
  base.format = (base.format.empty() ? "" : base.format + "/") + TableLayoutToString(start->layout);
  base.decimal_comma = decimal_comma;
  base.time_unit = std::move(plate.report.time_unit);
  base.warnings = std::move(plate.report.warnings);
  plate.report = std::move(base);
  return plate;
}

Plate ReadWorkbook(std::string_view bytes, const std::string& name, const ReadOptions& options) {
  ImportReport report;
  report.path = name;
  report.format = "xlsx";
  report.encoding = "xlsx";
  const std::unique_ptr<detail::CellTable> table =
      detail::ReadXlsxSheet(bytes, name, options.sheet, &report.sheet);
  // Cells of a workbook are not split by a delimiter; any character but ','
  // lets text cells written as "0,123" count towards a decimal comma.
  return ReadTable(*table, '\t', name, options, std::move(report));
}

Plate ReadText(detail::DecodedText decoded, const std::string& name, const ReadOptions& options) {
  ImportReport report;
  report.path = name;
  report.encoding = std::move(decoded.encoding);
  const char delimiter = detail::DetectDelimiter(decoded.text);
  report.delimiter = detail::DelimiterName(delimiter);
  const detail::TextTable table(std::move(decoded.text), delimiter);
  return ReadTable(table, delimiter, name, options, std::move(report));
}

// The whole file, or InputError with the operating system's reason.
std::string ReadWholeFile(const std::string& path) {
  const auto fail = [&](const std::string& what) -> InputError {
    return InputError(path, 0, 0, what + ": " + std::strerror(errno));
  };
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) throw fail("cannot open the file");
  struct Closer {
    int fd;
    ~Closer() { ::close(fd); }
  } closer{fd};
  struct stat info {};
  if (::fstat(fd, &info) != 0) throw fail("cannot read the file");
  if (S_ISDIR(info.st_mode)) {
    throw InputError(path, 0, 0, "is a directory; expected a plate file");
  }
  std::string bytes;
  if (S_ISREG(info.st_mode) && info.st_size > 0) {
    bytes.reserve(static_cast<std::size_t>(info.st_size));
  }
  char buffer[1 << 16];
  while (true) {
    const ssize_t got = ::read(fd, buffer, sizeof buffer);
    if (got < 0) {
      if (errno == EINTR) continue;
      throw fail("cannot read the file");
    }
    if (got == 0) break;
    bytes.append(buffer, static_cast<std::size_t>(got));
  }
  return bytes;
}

}  // namespace

Plate ReadPlateBytes(std::string_view bytes, const std::string& name, const ReadOptions& options) {
  if (detail::LooksLikeZip(bytes)) return ReadWorkbook(bytes, name, options);
  return ReadText(detail::DecodeText(bytes, name), name, options);
}

Plate ReadPlateFile(const std::string& path, const ReadOptions& options) {
  std::string bytes = ReadWholeFile(path);
  if (detail::LooksLikeZip(bytes)) return ReadWorkbook(bytes, path, options);
  detail::DecodedText decoded = detail::DecodeText(bytes, path);
  std::string().swap(bytes);  // the raw bytes are not needed while parsing
  return ReadText(std::move(decoded), path, options);
}

}  // namespace ratewell
