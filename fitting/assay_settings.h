// AssaySettings: how an assay turns absorbance into product (ASSAY.json).
//
// The settings say what the reader detects (species, wavelength, molar
// absorption coefficient ε, whether it is consumed or formed and how many
// molecules per product turnover), how long the light path through each well
// is, how much enzyme is present, how rates are taken, how blanks are
// subtracted, and the limits of the linear range. The mathematics that uses
// them is in fitting/beer_lambert.h (c = A / (ε·l)) and fitting/pathlength.h.
//
// File form (DESIGN §4). Every key is optional; the defaults are the values
// below, and are what `analyze` uses without a file:
//
//   { "detection": {"species": "NADH", "wavelength_nm": 340,
//                   "epsilon_per_M_cm": 6220, "direction": "consumed",
//                   "per_turnover": 1},
//     "pathlength": {"mode": "fixed", "cm": 1.0}
//                |  {"mode": "geometry", "volume_uL": 200, "well_area_cm2": 0.32}
//                |  {"mode": "water-peak", "sample_nm": 977, "reference_nm": 900,
//                    "k_per_cm": 0.18}
//                |  {"mode": "standards"},
//     "enzyme": {"nM": 5.0} | {"mg_per_mL": 0.0002, "molar_mass_Da": 52000},
//     "rate": {"method": "auto" | "linear" | "lag" | "progress",
//              "window_min": [a, b]},
//     "blank": "plate-mean" | "matched" | "none",
//     "absorbance_ceiling": 2.5, "max_substrate_consumed": 0.10 }
//
// The reader is strict, because a typo must never fall back to a default
// silently: an unknown key, a key that belongs to another pathlength mode, a
// repeated key, a value of the wrong type or out of range is an InputError
// naming the file, the line (and column) where the key is written, the key
// path ("pathlength.cm") and what was expected. `null` is accepted only where
// "not given" is a state of its own: "enzyme" (enzyme amount unknown) and
// "rate.window_min" (window chosen automatically).
//
// Example:
//   AssaySettings settings = ReadAssaySettingsFile("ASSAY.json");
//   nlohmann::json used = AssaySettingsToJson(settings);  // for results.json
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <utility>

#include <nlohmann/json.hpp>

#include "fitting/kinetic_models.h"
#include "fitting/nonlinear_fit.h"
#include "fitting/units.h"

namespace ratewell {

// Whether the detected species is used up or made as the product forms.
enum class DetectionDirection {
  kConsumed,  // "consumed": A falls as product forms (NADH oxidised; default)
  kFormed,    // "formed":   A rises as product forms (NAD⁺ reduced)
};
const char* DetectionDirectionToString(DetectionDirection direction);
// Exact, case-sensitive names as above; false (and *direction untouched) otherwise.
bool StringToDetectionDirection(std::string_view text, DetectionDirection* direction);

// How the pathlength of each well is found (see fitting/pathlength.h).
enum class PathlengthMode {
  kFixed,      // "fixed":      one value for every well (cm)
  kGeometry,   // "geometry":   l = volume / well floor area
  kWaterPeak,  // "water-peak": l = (A_sample − A_reference) / k per well
  kStandards,  // "standards":  l = slope of A vs [NADH] of standard wells / ε
};
const char* PathlengthModeToString(PathlengthMode mode);
bool StringToPathlengthMode(std::string_view text, PathlengthMode* mode);

// How a well's initial rate is taken from its trace.
enum class RateMethod {
  kAuto,      // "auto":     the rate code chooses per well (default)
  kLinear,    // "linear":   straight line over the window
  kLag,       // "lag":      first-order coupling lag, P = v·(t − τ(1 − e^(−t/τ)))
  kProgress,  // "progress": integrated progress curve (substrate depletion)
};
const char* RateMethodToString(RateMethod method);
bool StringToRateMethod(std::string_view text, RateMethod* method);

// How the non-enzymatic background rate of blank wells is subtracted.
enum class BlankMode {
  kPlateMean,  // "plate-mean": mean rate of all blank wells (default)
  kMatched,    // "matched":    blank wells at the same substrate level
  kNone,       // "none":       no subtraction
};
const char* BlankModeToString(BlankMode mode);
bool StringToBlankMode(std::string_view text, BlankMode* mode);

struct AssaySettings {
  struct Detection {
    // Name of the detected species; a label for reports ("NADH", "NADPH").
    // Non-empty.
    std::string species = "NADH";
    // Channel of the plate that carries the assay signal. > 0.
    double wavelength_nm = kNadhWavelengthNm;
    // Molar absorption coefficient ε at wavelength_nm, M⁻¹·cm⁻¹. > 0.
    // Default: NADH at 340 nm, 6220 (Horecker & Kornberg 1948).
    double epsilon_per_M_cm = kNadhEpsilon340PerMolarCm;
    DetectionDirection direction = DetectionDirection::kConsumed;
    // Molecules of the detected species per product turnover (1 for the
    // usual kinase and mutase couplings through LDH). > 0.
    double per_turnover = 1.0;

    bool operator==(const Detection&) const = default;
  };

  struct Pathlength {
    PathlengthMode mode = PathlengthMode::kFixed;
    // mode fixed: the pathlength, cm. 0 < cm < 5.
    double cm = 1.0;
    // mode geometry: liquid volume per well and the well's floor area;
    // required in that mode (no default: they depend on the plate and the
    // pipetting). l = volume_uL × 1e-3 cm³ / well_area_cm2.
    std::optional<double> volume_uL;
    std::optional<double> well_area_cm2;
    // mode water-peak: the water band and its baseline wavelength, and the
    // absorbance difference per cm of water (≈ 0.18 near 25 °C, common
    // practice, from memory). Distinct wavelengths, k > 0.
    double sample_nm = kWaterPeakSampleNm;
    double reference_nm = kWaterPeakReferenceNm;
    double k_per_cm = kWaterPeakAbsorbancePerCm;
    // mode standards: no keys; the NADH standard wells of the layout are used.

    bool operator==(const Pathlength&) const = default;
  };

  // The enzyme amount in the well, needed for kcat (molar) and specific
  // activity (mass). Forms accepted: {nM}; {mg_per_mL, molar_mass_Da};
  // {mg_per_mL} (specific activity only, kcat unknown); {nM, molar_mass_Da}.
  // {nM, mg_per_mL} together is rejected (two sources for one number), and so
  // is molar_mass_Da alone. All given values > 0. Empty: unknown.
  struct Enzyme {
    std::optional<double> nM;
    std::optional<double> mg_per_mL;
    std::optional<double> molar_mass_Da;

    // Whether any amount is known.
    bool known() const { return nM.has_value() || mg_per_mL.has_value(); }
    // Molar concentration in nM: given, or mg_per_mL / molar_mass_Da × 1e9;
    // nullopt when it cannot be known.
    std::optional<double> Nanomolar() const;
    // Mass concentration in mg/mL: given, or nM × 1e-9 × molar_mass_Da;
    // nullopt when it cannot be known.
    std::optional<double> MilligramsPerMillilitre() const;

    bool operator==(const Enzyme&) const = default;
  };

  struct Rate {
    RateMethod method = RateMethod::kAuto;
    // [start, end] in minutes from the first read, 0 ≤ start < end; nullopt:
    // the rate code chooses the window.
    std::optional<std::pair<double, double>> window_min;

    bool operator==(const Rate&) const = default;
  };

  // How the kinetic model is fitted to the well rates (fitting/
  // nonlinear_fit.h and model_selection.h say what each choice means). The
  // command line's --model and --ci override model and interval.
  struct Fit {
    // "auto" (the family the data allow) or a model id of DESIGN §2.
    std::string model = "auto";
    Weighting weighting = Weighting::kNone;
    RobustLoss loss = RobustLoss::kNone;
    double loss_scale = 1.0;  // > 0, in units of the weighted residual
    IntervalMethod interval = IntervalMethod::kProfile;
    double confidence_level = 0.95;  // in (0.5, 1)
    int bootstrap_resamples = 2000;  // 100 ... 100000
    BootstrapScheme bootstrap_scheme = BootstrapScheme::kResiduals;
    std::uint64_t bootstrap_seed = 20240611;
    // Cheng–Prusoff (1973) Ki from the logistic IC50: the mode the inhibitor
    // is taken to follow (competitive, uncompetitive or noncompetitive), the
    // substrate concentration of the dose–response series and the Km (and
    // its SE) measured separately. All in µM. Unset: no Ki from IC50.
    std::optional<KineticModel> cheng_prusoff_mode;
    double cheng_prusoff_substrate_uM = 0.0;
    double cheng_prusoff_km_uM = 0.0;
    std::optional<double> cheng_prusoff_km_se_uM;

    bool operator==(const Fit&) const = default;
  };

  Detection detection;
  Pathlength pathlength;
  Enzyme enzyme;
  Rate rate;
  Fit fit;
  BlankMode blank = BlankMode::kPlateMean;
  // Readings above this absorbance are not used (reader no longer linear;
  // 2.5 is common practice). > 0.
  double absorbance_ceiling = kDefaultAbsorbanceCeiling;
  // Initial-rate limit on the fraction of substrate consumed (10 %, common
  // practice). 0 < f < 1.
  double max_substrate_consumed = kDefaultMaxSubstrateConsumed;

  bool operator==(const AssaySettings&) const = default;

  // True when every value is usable; otherwise false and, if error is not
  // null, "key.path: what was expected" for the first problem found.
  bool IsValid(std::string* error) const;
};

// Parses ASSAY.json text. file names the source in error messages. Throws
// InputError (importers/input_error.h) as described at the top of this file.
// An empty or blank text is rejected; "{}" gives the defaults.
AssaySettings ParseAssaySettings(std::string_view json_text, const std::string& file);

// Reads and parses a file (UTF-8, with or without BOM). A file that cannot be
// opened, or is UTF-16, is an InputError naming it.
AssaySettings ReadAssaySettingsFile(const std::string& path);

// Every setting in use, defaults included, in the file form: pathlength holds
// only the keys of its mode; an unknown enzyme is written as null, and so is
// an automatic rate window. ParseAssaySettings(AssaySettingsToJson(s).dump())
// == s for every valid s.
nlohmann::json AssaySettingsToJson(const AssaySettings& settings);

}  // namespace ratewell
