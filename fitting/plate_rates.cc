#include "fitting/plate_rates.h"

#include <algorithm>
#include <boost/math/distributions/students_t.hpp>
#include <cmath>
#include <map>
#include <sstream>

#include "fitting/beer_lambert.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

struct Background {
  double rate = 0.0;
  double se = 0.0;
  int wells = 0;
};

// Mean background of a set of blank rates (see the header for the SE).
Background MeanBackground(const std::vector<const WellRate*>& blanks) {
  Background b;
  double sum = 0.0;
  double sum_se2 = 0.0;
  for (const WellRate* w : blanks) {
    sum += w->estimate.rate_uM_per_min;
    sum_se2 += w->estimate.se_uM_per_min * w->estimate.se_uM_per_min;
  }
  b.wells = static_cast<int>(blanks.size());
  if (b.wells == 0) return b;
  const double n = static_cast<double>(b.wells);
  b.rate = sum / n;
  double scatter = 0.0;
  if (b.wells > 1) {
    double ss = 0.0;
    for (const WellRate* w : blanks) ss += std::pow(w->estimate.rate_uM_per_min - b.rate, 2);
    scatter = std::sqrt(ss / (n - 1.0)) / std::sqrt(n);
  }
  b.se = std::max(scatter, std::sqrt(sum_se2) / n);
  return b;
}

bool SameLevel(double a, double b) {
  if (std::isnan(a) || std::isnan(b)) return std::isnan(a) && std::isnan(b);
  return std::abs(a - b) <= 1e-9 * std::max(std::abs(a), std::abs(b));
}

std::string FormatRate(double value) {
  std::ostringstream s;
  s.precision(3);
  s << value;
  return s.str();
}

void AddFlag(WellRate* w, const std::string& flag) {
  if (std::find(w->flags.begin(), w->flags.end(), flag) == w->flags.end()) w->flags.push_back(flag);
}

}  // namespace

PlateRates ComputePlateRates(const Plate& plate, const Layout& layout, const AssaySettings& settings,
                             const std::function<void(int, int)>& progress,
                             const WellDecisions& decisions) {
  PlateRates out;
  out.plate = plate.report.path;
  const std::string& file = plate.report.path;
  if (!(layout.geometry == plate.geometry)) {
    throw InputError(layout.path, 0, 0,
                     "the layout is for a " + std::to_string(layout.geometry.num_wells()) +
                         "-well plate but " + file + " holds a " +
                         std::to_string(plate.geometry.num_wells()) +
                         "-well plate; expected a layout of the same plate size");
  }
  const int channel = plate.ChannelOf(settings.detection.wavelength_nm);
  if (channel < 0) {
    std::ostringstream have;
    for (std::size_t i = 0; i < plate.wavelengths_nm.size(); ++i) {
      have << (i ? ", " : "") << plate.wavelengths_nm[i] << " nm";
    }
    throw InputError(file, 0, 0,
                     "no readings at the detection wavelength " +
                         FormatRate(settings.detection.wavelength_nm) +
                         " nm; the file has " + have.str());
  }
  out.pathlength = ComputePathlength(settings, plate, &layout);
  for (const std::string& w : out.pathlength.warnings) out.warnings.push_back(w);

  RateOptions options;
  options.method = settings.rate.method;
  options.window_min = settings.rate.window_min;
  options.absorbance_ceiling = settings.absorbance_ceiling;
  options.max_substrate_consumed = settings.max_substrate_consumed;
  // The options of one well: the user's window when there is one.
  const auto options_for = [&](int well) {
    RateOptions o = options;
    const auto it = decisions.windows_min.find(well);
    if (it != decisions.windows_min.end()) o.window_min = it->second;
    return o;
  };
  const auto decide = [&](WellRate* w) {
    if (decisions.windows_min.count(w->well)) AddFlag(w, "user-window");
    const auto it = decisions.exclusions.find(w->well);
    if (it != decisions.exclusions.end()) {
      w->excluded = true;
      w->exclusion_reason = it->second;
    }
  };

  const std::optional<double> settings_enzyme_nM = settings.enzyme.Nanomolar();
  const std::optional<double> settings_mg_per_mL = settings.enzyme.MilligramsPerMillilitre();

  // Wells to report: every well with data (empty wells with readings are
  // listed with their role and no rate).
  std::vector<int> todo;
  for (int well = 0; well < plate.geometry.num_wells(); ++well) {
    if (!plate.at(channel, well).empty()) todo.push_back(well);
  }
  int layout_wells_without_data = 0;
  for (int well = 0; well < plate.geometry.num_wells(); ++well) {
    if (layout.at(well).role != WellRole::kEmpty && plate.at(channel, well).empty()) {
      ++layout_wells_without_data;
    }
  }
  if (layout_wells_without_data > 0) {
    out.warnings.push_back(std::to_string(layout_wells_without_data) +
                           " wells named in the layout have no readings in " + file);
  }

  const int total = static_cast<int>(todo.size());
  out.wells.reserve(todo.size());
  std::map<int, RateEstimate> automatic_estimates;  // wells with a user window
  for (int i = 0; i < total; ++i) {
    const int well = todo[static_cast<std::size_t>(i)];
    const WellInfo& info = layout.at(well);
    WellRate w;
    w.well = well;
    w.name = WellName(well, plate.geometry);
    w.role = info.role;
    w.substrate_uM = info.substrate_uM;
    w.inhibitor_uM = info.inhibitor_uM;
    w.group = info.group;
    if (!std::isnan(info.enzyme_nM)) {
      w.enzyme_nM = info.enzyme_nM;
    } else if (settings_enzyme_nM && info.role != WellRole::kBlank) {
      w.enzyme_nM = *settings_enzyme_nM;
    }
    w.pathlength_cm = out.pathlength.cm_per_well[static_cast<std::size_t>(well)];
    w.pathlength_se_cm = out.pathlength.se_cm_per_well[static_cast<std::size_t>(well)];
    const PathlengthFlag pflag = out.pathlength.flag_per_well[static_cast<std::size_t>(well)];
    if (pflag != PathlengthFlag::kNone) AddFlag(&w, std::string("pathlength-") + PathlengthFlagToString(pflag));

    if (info.role == WellRole::kEmpty) {
      w.estimate.ok = false;
      w.estimate.message = "empty well: no rate estimated";
      decide(&w);
      out.wells.push_back(std::move(w));
      if (progress) progress(i + 1, total);
      continue;
    }
    if (std::isfinite(w.pathlength_cm) && w.pathlength_cm > 0.0) {
      RateInput input;
      input.series = &plate.at(channel, well);
      input.product_uM_per_A = ProductMicromolarPerAbsorbance(settings.detection, w.pathlength_cm);
      // No-substrate and standard wells hold no substrate: nothing to deplete.
      const bool no_substrate = info.role == WellRole::kNoSubstrate || info.role == WellRole::kStandard;
      input.substrate_uM = no_substrate ? 0.0 : info.substrate_uM;
      w.estimate = EstimateInitialRate(input, options_for(well));
      // The pooled lag (step 2b) is a property of the plate: it comes from
      // the automatic windows, whatever window a person chose for a well.
      if (decisions.windows_min.count(well)) {
        automatic_estimates.emplace(well, EstimateInitialRate(input, options));
      }
    } else {
      w.estimate.ok = false;
      w.estimate.message = "no usable pathlength for this well";
    }
    for (const std::string& flag : w.estimate.flags) AddFlag(&w, flag);
    if (!w.estimate.ok) AddFlag(&w, "no-rate");
    decide(&w);
    out.wells.push_back(std::move(w));
    if (progress) progress(i + 1, total);
  }

  // Second pass with the plate's coupling lag held (header, step 2b).
  if (settings.rate.method != RateMethod::kLinear) {
    // Inverse-variance weighted mean of every well's own τ. Selecting wells
    // by relative precision (SE below a fraction of τ) would favour the
    // wells whose τ came out high: on the demo plates that read the lag
    // 25-50 % long. Each SE is floored so that one well cannot dominate.
    constexpr double kTauSeFloorMin = 0.01;
    double sum_w = 0.0;
    double sum_wt = 0.0;
    int wells_used = 0;
    for (const WellRate& w : out.wells) {
      const bool has_enzyme = w.role == WellRole::kSample || w.role == WellRole::kNoSubstrate;
      const auto automatic = automatic_estimates.find(w.well);
      const RateEstimate& e = automatic != automatic_estimates.end() ? automatic->second : w.estimate;
      if (!has_enzyme || !e.IsUsable() || !e.lag_tau_min || !e.lag_tau_se_min) continue;
      if (!std::isfinite(*e.lag_tau_min) || !std::isfinite(*e.lag_tau_se_min)) continue;
      const double se = std::max(*e.lag_tau_se_min, kTauSeFloorMin);
      sum_w += 1.0 / (se * se);
      sum_wt += *e.lag_tau_min / (se * se);
      ++wells_used;
    }
    const double pooled = sum_w > 0.0 ? sum_wt / sum_w : 0.0;
    const double pooled_se = sum_w > 0.0 ? 1.0 / std::sqrt(sum_w) : 0.0;
    if (wells_used >= 3 && pooled_se < 0.25 * pooled + 0.05) {
      const double tau = pooled;
      out.coupling_tau_min = tau;
      out.coupling_tau_wells = wells_used;
      for (WellRate& w : out.wells) {
        if (w.role != WellRole::kSample && w.role != WellRole::kNoSubstrate) continue;
        if (!(std::isfinite(w.pathlength_cm) && w.pathlength_cm > 0.0)) continue;
        RateInput input;
        input.series = &plate.at(channel, w.well);
        input.product_uM_per_A = ProductMicromolarPerAbsorbance(settings.detection, w.pathlength_cm);
        input.substrate_uM = w.role == WellRole::kNoSubstrate ? 0.0 : w.substrate_uM;  // samples and no-substrate only
        input.coupling_tau_min = tau;
        w.estimate = EstimateInitialRate(input, options_for(w.well));
        std::vector<std::string> kept;
        for (const std::string& f : w.flags) {
          if (f.rfind("pathlength-", 0) == 0) kept.push_back(f);
        }
        w.flags = kept;
        for (const std::string& flag : w.estimate.flags) AddFlag(&w, flag);
        if (!w.estimate.ok) AddFlag(&w, "no-rate");
        if (decisions.windows_min.count(w.well)) AddFlag(&w, "user-window");
      }
    }
  }

  // Background from the blank wells.
  std::vector<const WellRate*> blanks;
  for (const WellRate& w : out.wells) {
    if (w.role == WellRole::kBlank && !w.excluded && w.estimate.IsUsable()) blanks.push_back(&w);
  }
  const Background plate_background = MeanBackground(blanks);
  out.background_uM_per_min = plate_background.rate;
  out.background_se_uM_per_min = plate_background.se;
  out.blank_wells_used = plate_background.wells;
  const bool subtract = settings.blank != BlankMode::kNone && plate_background.wells > 0;
  if (settings.blank != BlankMode::kNone && plate_background.wells == 0) {
    out.warnings.push_back("no usable blank (no-enzyme) wells: rates are not background-corrected");
  }
  std::map<double, Background> matched;
  bool warned_fallback = false;

  for (WellRate& w : out.wells) {
    if (!w.estimate.IsUsable()) continue;
    Background b;
    if (subtract && w.role != WellRole::kBlank) {
      b = plate_background;
      if (settings.blank == BlankMode::kMatched) {
        auto it = matched.find(w.substrate_uM);
        if (it == matched.end()) {
          std::vector<const WellRate*> same;
          for (const WellRate* blank : blanks) {
            if (SameLevel(blank->substrate_uM, w.substrate_uM)) same.push_back(blank);
          }
          it = matched.emplace(w.substrate_uM, MeanBackground(same)).first;
        }
        if (it->second.wells > 0) {
          b = it->second;
        } else if (!warned_fallback && w.role == WellRole::kSample) {
          out.warnings.push_back(
              "matched blank subtraction: some substrate levels have no blank well; the plate "
              "mean of the blanks was used for them");
          warned_fallback = true;
        }
      }
    }
    w.background_uM_per_min = b.rate;
    w.background_se_uM_per_min = b.se;
    w.rate_uM_per_min = w.estimate.rate_uM_per_min - b.rate;
    w.se_uM_per_min = std::hypot(w.estimate.se_uM_per_min, b.se);
    const int dof = std::max(1, w.estimate.degrees_of_freedom);
    const double t = boost::math::quantile(boost::math::students_t(dof), 0.975);
    w.ci95_lo_uM_per_min = w.rate_uM_per_min - t * w.se_uM_per_min;
    w.ci95_hi_uM_per_min = w.rate_uM_per_min + t * w.se_uM_per_min;
    if (std::isfinite(w.enzyme_nM) && w.enzyme_nM > 0.0) {
      w.turnover_per_s = TurnoverPerSecond(w.rate_uM_per_min, w.enzyme_nM);
      std::optional<double> mg_per_mL;
      if (settings.enzyme.molar_mass_Da) {
        mg_per_mL = w.enzyme_nM * 1e-9 * *settings.enzyme.molar_mass_Da;
      } else if (settings_mg_per_mL && std::isnan(layout.at(w.well).enzyme_nM)) {
        mg_per_mL = settings_mg_per_mL;
      }
      if (mg_per_mL && *mg_per_mL > 0.0) {
        w.specific_activity_U_per_mg = UnitsPerMilligram(w.rate_uM_per_min, *mg_per_mL);
      }
    } else if (settings_mg_per_mL && std::isnan(layout.at(w.well).enzyme_nM) &&
               w.role != WellRole::kBlank) {
      w.specific_activity_U_per_mg = UnitsPerMilligram(w.rate_uM_per_min, *settings_mg_per_mL);
    }
  }

  // No-substrate wells: substrate-independent NADH loss, worth a word.
  std::vector<const WellRate*> no_substrate;
  for (const WellRate& w : out.wells) {
    if (w.role == WellRole::kNoSubstrate && w.estimate.IsUsable()) no_substrate.push_back(&w);
  }
  if (!no_substrate.empty()) {
    double sum = 0.0;
    double sum_se2 = 0.0;
    for (const WellRate* w : no_substrate) {
      sum += w->rate_uM_per_min;
      sum_se2 += w->se_uM_per_min * w->se_uM_per_min;
    }
    const double n = static_cast<double>(no_substrate.size());
    const double mean = sum / n;
    // Only worth a word when clearly above zero (about two standard errors).
    if (mean > 2.0 * std::sqrt(sum_se2) / n) out.warnings.push_back("no-substrate wells (" + std::to_string(no_substrate.size()) +
                           ") show a mean background-corrected rate of " + FormatRate(mean) +
                           " uM/min (substrate-independent NADH loss, e.g. a contaminating "
                           "activity in the enzyme or coupling system)");
  }
  return out;
}

}  // namespace ratewell
