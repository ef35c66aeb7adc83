#include "fitting/pathlength.h"

#include <cmath>
#include <cstdio>
#include <limits>
#include <set>
#include <stdexcept>
#include <string>

#include "fitting/units.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// Wells listed by name in one aggregated warning before "and N more".
constexpr int kMaxWellsNamedInWarning = 12;

std::string FormatNumber(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.6g", value);
  return buffer;
}

bool IsPlausible(double cm) {
  return cm >= kPlausibleWellPathlengthMinCm && cm <= kPlausibleWellPathlengthMaxCm;
}

std::string PlausibleRangeText() {
  return FormatNumber(kPlausibleWellPathlengthMinCm) + "-" +
         FormatNumber(kPlausibleWellPathlengthMaxCm) + " cm";
}

// "340, 405 nm", or "none".
std::string ListWavelengths(const Plate& plate) {
  if (plate.wavelengths_nm.empty()) return "none";
  std::string list;
  for (double nm : plate.wavelengths_nm) {
    if (!list.empty()) list += ", ";
    list += FormatNumber(nm);
  }
  return list + " nm";
}

// Channel index of nm or an InputError naming the plate and what it has.
int RequireChannel(const Plate& plate, double nm, const std::string& purpose) {
  const int channel = plate.ChannelOf(nm);
  if (channel < 0) {
    throw InputError(plate.report.path, 0, 0,
                     "the plate has no " + FormatNumber(nm) + " nm channel, needed for " +
                         purpose + "; wavelengths in the file: " + ListWavelengths(plate));
  }
  return channel;
}

// Mean, sample variance and count of a series' valid values (optionally at
// most ceiling).
struct ValidStats {
  int n = 0;
  double mean = kNaN;
  double variance = kNaN;  // n − 1 denominator; NaN when n < 2
  int above_ceiling = 0;
};

ValidStats StatsOfValid(const Series& series,
                        double ceiling = std::numeric_limits<double>::infinity()) {
  ValidStats stats;
  double sum = 0.0;
  for (std::size_t i = 0; i < series.size(); ++i) {
    if (series.status[i] != PointStatus::kValid || !std::isfinite(series.value[i])) continue;
    if (series.value[i] > ceiling) {
      ++stats.above_ceiling;
      continue;
    }
    sum += series.value[i];
    ++stats.n;
  }
  if (stats.n == 0) return stats;
  stats.mean = sum / stats.n;
  if (stats.n >= 2) {
    double squares = 0.0;
    for (std::size_t i = 0; i < series.size(); ++i) {
      if (series.status[i] != PointStatus::kValid || !std::isfinite(series.value[i]) ||
          series.value[i] > ceiling) {
        continue;
      }
      const double d = series.value[i] - stats.mean;
      squares += d * d;
    }
    stats.variance = squares / (stats.n - 1);
  }
  return stats;
}

bool WellHasAnyValidPoint(const Plate& plate, int well) {
  for (int channel = 0; channel < plate.num_channels(); ++channel) {
    for (PointStatus status : plate.at(channel, well).status) {
      if (status == PointStatus::kValid) return true;
    }
  }
  return false;
}

std::string NameWells(const std::vector<int>& wells, const PlateGeometry& geometry) {
  std::string text;
  int named = 0;
  for (int well : wells) {
    if (named == kMaxWellsNamedInWarning) {
      text += " and " + std::to_string(wells.size() - named) + " more";
      break;
    }
    if (!text.empty()) text += ", ";
    text += WellName(well, geometry);
    ++named;
  }
  return text;
}

// Every well the same value; flagged when check_plausible and outside the range.
PathlengthResult UniformResult(const AssaySettings& settings, const Plate& plate, double cm,
                               double se_cm, bool check_plausible) {
  PathlengthResult result;
  result.mode = PathlengthModeToString(settings.pathlength.mode);
  const auto wells = static_cast<std::size_t>(plate.geometry.num_wells());
  result.cm_per_well.assign(wells, cm);
  result.se_cm_per_well.assign(wells, se_cm);
  result.flag_per_well.assign(wells, !check_plausible || IsPlausible(cm)
                                         ? PathlengthFlag::kNone
                                         : PathlengthFlag::kOutOfRange);
  return result;
}

PathlengthResult WaterPeak(const AssaySettings& settings, const Plate& plate,
                           const Layout* layout) {
  // Wells the layout calls empty hold no liquid: no pathlength to warn about.
  const auto in_use = [&](int well) {
    return layout == nullptr || layout->wells.size() != static_cast<std::size_t>(plate.geometry.num_wells()) ||
           layout->at(well).role != WellRole::kEmpty;
  };
  const auto& p = settings.pathlength;
  const int sample = RequireChannel(plate, p.sample_nm, "the water-peak pathlength (sample_nm)");
  const int reference =
      RequireChannel(plate, p.reference_nm, "the water-peak pathlength (reference_nm)");

  PathlengthResult result;
  result.mode = PathlengthModeToString(p.mode);
  const int wells = plate.geometry.num_wells();
  result.cm_per_well.assign(static_cast<std::size_t>(wells), kNaN);
  result.se_cm_per_well.assign(static_cast<std::size_t>(wells), kNaN);
  result.flag_per_well.assign(static_cast<std::size_t>(wells), PathlengthFlag::kNone);

  std::vector<int> wells_without_reads;
  std::vector<int> wells_out_of_range;
  for (int well = 0; well < wells; ++well) {
    const ValidStats a_sample = StatsOfValid(plate.at(sample, well));
    const ValidStats a_reference = StatsOfValid(plate.at(reference, well));
    const auto index = static_cast<std::size_t>(well);
    if (a_sample.n == 0 || a_reference.n == 0) {
      result.flag_per_well[index] = PathlengthFlag::kNoValidReads;
      // An unused well (no data anywhere) is not worth a warning.
      if (WellHasAnyValidPoint(plate, well) && in_use(well)) wells_without_reads.push_back(well);
      continue;
    }
    const double cm = WaterPeakPathlengthCm(a_sample.mean, a_reference.mean, p.k_per_cm);
    result.cm_per_well[index] = cm;
    result.se_cm_per_well[index] =
        (a_sample.n >= 2 && a_reference.n >= 2)
            ? std::sqrt(a_sample.variance / a_sample.n + a_reference.variance / a_reference.n) /
                  p.k_per_cm
            : 0.0;
    if (!IsPlausible(cm)) {
      result.flag_per_well[index] = PathlengthFlag::kOutOfRange;
      if (in_use(well)) wells_out_of_range.push_back(well);
    }
  }
  if (wells_out_of_range.size() == 1) {
    const int well = wells_out_of_range.front();
    result.warnings.push_back("well " + WellName(well, plate.geometry) + ": water-peak pathlength " +
                              FormatNumber(result.cm_per_well[static_cast<std::size_t>(well)]) +
                              " cm is outside " + PlausibleRangeText());
  } else if (!wells_out_of_range.empty()) {
    result.warnings.push_back("water-peak pathlength outside " + PlausibleRangeText() + " in " +
                              std::to_string(wells_out_of_range.size()) +
                              " wells: " + NameWells(wells_out_of_range, plate.geometry));
  }
  if (!wells_without_reads.empty()) {
    result.warnings.push_back(
        "water-peak pathlength unknown for " + std::to_string(wells_without_reads.size()) +
        " well(s) with no valid read at " + FormatNumber(p.sample_nm) + " or " +
        FormatNumber(p.reference_nm) + " nm: " +
        NameWells(wells_without_reads, plate.geometry));
  }
  return result;
}

PathlengthResult Standards(const AssaySettings& settings, const Plate& plate,
                           const Layout* layout) {
  if (layout == nullptr) {
    throw InputError(plate.report.path, 0, 0,
                     "pathlength mode \"standards\" needs a layout with standard wells "
                     "(role standard, column standard_uM)");
  }
  if (!(layout->geometry == plate.geometry) ||
      layout->wells.size() != static_cast<std::size_t>(plate.geometry.num_wells())) {
    throw InputError(layout->path, 0, 0,
                     "the layout is for a " + std::to_string(layout->geometry.rows) + " x " +
                         std::to_string(layout->geometry.columns) + " plate but the plate is " +
                         std::to_string(plate.geometry.rows) + " x " +
                         std::to_string(plate.geometry.columns));
  }
  const auto& detection = settings.detection;
  const int channel = RequireChannel(plate, detection.wavelength_nm,
                                     "the NADH standards (detection.wavelength_nm)");

  PathlengthResult result;
  result.mode = PathlengthModeToString(settings.pathlength.mode);
  StandardsFit fit;
  std::vector<int> unusable;
  std::vector<int> with_ceiling_reads;
  std::set<double> concentrations;
  int standard_wells = 0;
  for (int well = 0; well < plate.geometry.num_wells(); ++well) {
    const WellInfo& info = layout->at(well);
    if (info.role != WellRole::kStandard) continue;
    ++standard_wells;
    if (!std::isfinite(info.standard_uM) || info.standard_uM < 0.0) {
      throw InputError(layout->path, info.line, 0,
                       "well " + WellName(well, plate.geometry) +
                           " is a standard but has no usable standard_uM (expected a "
                           "concentration >= 0)");
    }
    const ValidStats stats = StatsOfValid(plate.at(channel, well), settings.absorbance_ceiling);
    if (stats.above_ceiling > 0) with_ceiling_reads.push_back(well);
    if (stats.n == 0) {
      unusable.push_back(well);
      continue;
    }
    fit.points.push_back(StandardPoint{well, info.standard_uM, stats.mean, stats.n});
    concentrations.insert(info.standard_uM);
  }
  if (!with_ceiling_reads.empty()) {
    result.warnings.push_back("standards: reads above the absorbance ceiling (" +
                              FormatNumber(settings.absorbance_ceiling) + ") left out in " +
                              NameWells(with_ceiling_reads, plate.geometry));
  }
  if (!unusable.empty()) {
    result.warnings.push_back("standards: no usable read at " +
                              FormatNumber(detection.wavelength_nm) + " nm in " +
                              NameWells(unusable, plate.geometry) + "; well(s) not used");
  }
  fit.distinct_concentrations = static_cast<int>(concentrations.size());
  if (fit.distinct_concentrations < 3) {
    throw InputError(layout->path, 0, 0,
                     "pathlength mode \"standards\" needs standard wells at 3 or more distinct "
                     "standard_uM values with usable reads; found " +
                         std::to_string(fit.distinct_concentrations) + " (in " +
                         std::to_string(standard_wells) + " standard well(s))");
  }

  std::vector<double> x;
  std::vector<double> y;
  for (const StandardPoint& point : fit.points) {
    x.push_back(point.standard_uM);
    y.push_back(point.absorbance);
  }
  fit.line = FitLine(x, y);
  if (!(fit.line.slope > 0.0)) {
    throw InputError(plate.report.path, 0, 0,
                     "standards: A" + FormatNumber(detection.wavelength_nm) +
                         " does not rise with standard_uM (slope " +
                         FormatNumber(fit.line.slope) + " per uM); cannot give a pathlength");
  }
  fit.cm = fit.line.slope * kMicromolarPerMolar / detection.epsilon_per_M_cm;
  fit.se_cm = fit.line.slope_se * kMicromolarPerMolar / detection.epsilon_per_M_cm;

  PathlengthResult uniform = UniformResult(settings, plate, fit.cm, fit.se_cm, true);
  uniform.warnings = std::move(result.warnings);
  if (!IsPlausible(fit.cm)) {
    uniform.warnings.push_back("standards: pathlength " + FormatNumber(fit.cm) +
                               " cm is outside " + PlausibleRangeText() +
                               " (is epsilon_per_M_cm right for these standards?)");
  }
  uniform.standards = std::move(fit);
  return uniform;
}

}  // namespace

const char* PathlengthFlagToString(PathlengthFlag flag) {
  switch (flag) {
    case PathlengthFlag::kNone: return "none";
    case PathlengthFlag::kNoValidReads: return "no-valid-reads";
    case PathlengthFlag::kOutOfRange: return "out-of-range";
  }
  return "unknown";
}

LineFit FitLine(const std::vector<double>& x, const std::vector<double>& y) {
  if (x.size() != y.size()) {
    throw std::invalid_argument("FitLine: x and y differ in size");
  }
  if (x.size() < 3) {
    throw std::invalid_argument("FitLine: needs at least 3 points for a standard error");
  }
  const auto n = static_cast<double>(x.size());
  double sum_x = 0.0;
  double sum_y = 0.0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) {
      throw std::invalid_argument("FitLine: non-finite data");
    }
    sum_x += x[i];
    sum_y += y[i];
  }
  const double mean_x = sum_x / n;
  const double mean_y = sum_y / n;
  double sxx = 0.0;
  double sxy = 0.0;
  double syy = 0.0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    const double dx = x[i] - mean_x;
    const double dy = y[i] - mean_y;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  if (!(sxx > 0.0)) {
    throw std::invalid_argument("FitLine: x is constant");
  }
  LineFit fit;
  fit.n = static_cast<int>(x.size());
  fit.slope = sxy / sxx;
  fit.intercept = mean_y - fit.slope * mean_x;
  double ssr = 0.0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    const double r = y[i] - (fit.intercept + fit.slope * x[i]);
    ssr += r * r;
  }
  const double s2 = ssr / (n - 2.0);
  fit.residual_sd = std::sqrt(s2);
  fit.slope_se = std::sqrt(s2 / sxx);
  fit.intercept_se = std::sqrt(s2 * (1.0 / n + mean_x * mean_x / sxx));
  fit.r_squared = syy > 0.0 ? 1.0 - ssr / syy : 0.0;
  return fit;
}

double GeometryPathlengthCm(double volume_uL, double well_area_cm2) {
  if (!std::isfinite(volume_uL) || !(volume_uL > 0.0)) {
    throw std::invalid_argument("GeometryPathlengthCm: volume_uL must be positive");
  }
  if (!std::isfinite(well_area_cm2) || !(well_area_cm2 > 0.0)) {
    throw std::invalid_argument("GeometryPathlengthCm: well_area_cm2 must be positive");
  }
  return volume_uL * kCubicCentimetresPerMicrolitre / well_area_cm2;
}

double WaterPeakPathlengthCm(double absorbance_sample, double absorbance_reference,
                             double k_per_cm) {
  if (!std::isfinite(k_per_cm) || !(k_per_cm > 0.0)) {
    throw std::invalid_argument("WaterPeakPathlengthCm: k_per_cm must be positive");
  }
  return (absorbance_sample - absorbance_reference) / k_per_cm;
}

PathlengthResult ComputePathlength(const AssaySettings& settings, const Plate& plate,
                                   const Layout* layout) {
  std::string error;
  if (!settings.IsValid(&error)) {
    throw std::invalid_argument("ComputePathlength: invalid settings: " + error);
  }
  const auto& p = settings.pathlength;
  switch (p.mode) {
    case PathlengthMode::kFixed:
      // The user's own number: not second-guessed beyond IsValid (< 5 cm).
      return UniformResult(settings, plate, p.cm, 0.0, false);
    case PathlengthMode::kGeometry: {
      PathlengthResult result = UniformResult(
          settings, plate, GeometryPathlengthCm(*p.volume_uL, *p.well_area_cm2), 0.0, true);
      if (!result.cm_per_well.empty() && !IsPlausible(result.cm_per_well.front())) {
        result.warnings.push_back("geometry pathlength " +
                                  FormatNumber(result.cm_per_well.front()) +
                                  " cm is outside " + PlausibleRangeText());
      }
      return result;
    }
    case PathlengthMode::kWaterPeak:
      return WaterPeak(settings, plate, layout);
    case PathlengthMode::kStandards:
      return Standards(settings, plate, layout);
  }
  throw std::invalid_argument("ComputePathlength: unknown pathlength mode");
}

}  // namespace ratewell
