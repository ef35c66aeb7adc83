#include "simulate/detail/plate_plan.h"

#include <algorithm>
#include <charconv>

namespace ratewell::detail {
namespace {

// Shortest exact text of a concentration, for group labels: 2.5 -> "2.5".
std::string Short(double value) {
  char buffer[32];
  const auto result = std::to_chars(buffer, buffer + sizeof buffer, value);
  return std::string(buffer, result.ptr);
}

// prefix followed by the value's shortest text.
std::string Label(const char* prefix, double value) {
  std::string label(prefix);
  label += Short(value);
  return label;
}

// Walks the plate in fill order, placing wells.
class Placer {
 public:
  Placer(const Scenario& scenario, std::vector<PlannedWell>* wells)
      : geometry_(scenario.geometry),
        by_columns_(scenario.fill_by_columns),
        line_length_(by_columns_ ? geometry_.rows : geometry_.columns),
        wells_(wells) {}

  int line_length() const { return line_length_; }
  // Wells up to and including the last one placed, in fill order.
  long used() const { return used_; }

  // Moves to the start of the next line unless already at one.
  void NewLine() {
    if (position_ % line_length_ != 0) position_ += line_length_ - position_ % line_length_;
  }
  // Starts a new line when a run of `length` wells that fits in a line does
  // not fit in what is left of the current one.
  void KeepTogether(int length) {
    const long left = line_length_ - position_ % line_length_;
    if (length <= line_length_ && length > left) NewLine();
  }

  void Place(const PlannedWell& well) {
    if (position_ < geometry_.num_wells()) {
      int index;
      if (by_columns_) {
        const int column = static_cast<int>(position_ / geometry_.rows);
        const int row = static_cast<int>(position_ % geometry_.rows);
        index = row * geometry_.columns + column;
      } else {
        index = static_cast<int>(position_);
      }
      (*wells_)[static_cast<std::size_t>(index)] = well;
    }
    ++position_;
    used_ = position_;
  }

 private:
  PlateGeometry geometry_;
  bool by_columns_;
  int line_length_;
  std::vector<PlannedWell>* wells_;
  long position_ = 0;
  long used_ = 0;
};

}  // namespace

std::optional<std::vector<PlannedWell>> PlanPlate(const Scenario& scenario, int* wells_needed) {
  const Scenario::Design& d = scenario.design;
  std::vector<PlannedWell> wells(static_cast<std::size_t>(scenario.geometry.num_wells()));
  Placer placer(scenario, &wells);
  const int series_length = static_cast<int>(d.substrate_uM.size());

  for (std::size_t i = 0; i < d.inhibitor_uM.size(); ++i) {
    for (int r = 0; r < d.replicates; ++r) {
      placer.KeepTogether(series_length);
      for (double s : d.substrate_uM) {
        PlannedWell w;
        w.role = WellRole::kSample;
        w.substrate_uM = s;
        w.inhibitor_uM = d.inhibitor_uM[i];
        w.enzyme = true;
        w.group = Label("S", s) + Label("_I", d.inhibitor_uM[i]);
        placer.Place(w);
      }
    }
  }
  placer.NewLine();
  const double top_substrate = *std::max_element(d.substrate_uM.begin(), d.substrate_uM.end());
  for (int k = 0; k < d.saturating_wells; ++k) {
    PlannedWell w;
    w.role = WellRole::kSample;
    w.substrate_uM = top_substrate;
    w.enzyme = true;
    w.saturating = true;
    w.group = "saturating";
    placer.Place(w);
  }
  auto blank = [&](double s) {
    PlannedWell w;
    w.role = WellRole::kBlank;
    w.substrate_uM = s;
    w.group = Label("blank_S", s);
    placer.Place(w);
  };
  for (int r = 0; r < d.blanks_per_substrate; ++r) {
    for (double s : d.substrate_uM) blank(s);
  }
  for (double s : d.blank_substrate_uM) blank(s);
  for (int k = 0; k < d.no_substrate; ++k) {
    PlannedWell w;
    w.role = WellRole::kNoSubstrate;
    w.enzyme = true;
    w.group = "no-substrate";
    placer.Place(w);
  }
  for (int r = 0; r < d.standard_replicates; ++r) {
    for (double c : d.standards_uM) {
      PlannedWell w;
      w.role = WellRole::kStandard;
      w.standard_uM = c;
      w.group = Label("standard_", c);
      placer.Place(w);
    }
  }
  if (wells_needed != nullptr) *wells_needed = static_cast<int>(placer.used());
  if (placer.used() > scenario.geometry.num_wells()) return std::nullopt;
  return wells;
}

}  // namespace ratewell::detail
