// Scenario: the description of one synthetic coupled-assay plate.
//
// `ratewell simulate --scenario FILE --out DIR` reads a scenario, simulates
// the plate (simulate/simulator.h) and writes plate files, a layout, an
// ASSAY.json and a truth.json holding the numbers an analysis must recover.
// A scenario file is JSON in our own words. Every key is checked: an unknown
// key, a key that does not belong to the chosen kinetic model, a wrong type
// or an out-of-range value is an InputError naming the file, the line and
// column where the key is written, the key path ("kinetics.ki_uM") and what
// was expected.
//
// Example (every key shown; the comments are not part of the file):
//
//   { "scenario_version": 1,                   // optional; 1 is the only version
//     "run": "RK-1 lot 7 with RWI-4",          // required: the run's name
//     "lab": "Bench 3, an invented lab",       // optional
//     "plate": {"wells": 96,                   // 96, 384 or 1536 (default 96)
//               "file_stem": "rk1-lot7",       // plate file names start so (default "plate")
//               "fill": "rows"},               // "rows" or "columns" (default "rows")
//     "reads": {"interval_s": 30, "count": 41, // required: read interval and number of reads
//               "start_delay_s": 20,           // first read after mixing (default 0)
//               "temperature_C": 25.0},        // optional; written in wide and grid files
//     "files": ["long", "wide", "grid", "xlsx",          // default ["long"]
//               {"format": "grid", "delimiter": "semicolon", "decimal_comma": true,
//                "line_end": "crlf", "bom": true, "name": "rk1_grid_eu.csv"},
//               {"format": "xlsx", "table": "grid", "time": "minutes"}],
//     "preamble": true,                        // run-header lines above each table (default true)
//     "detection": {"species": "NADH", "wavelength_nm": 340, "epsilon_per_M_cm": 6220,
//                   "per_turnover": 1, "direction": "consumed"},   // all optional, as ASSAY.json
//     "extra_wavelengths_nm": [405],           // channels where nothing absorbs (default none)
//     "pathlength": {"cm": 0.55},              // fixed, or from the well geometry:
//                 | {"volume_uL": 200, "well_area_cm2": 0.32,
//                    "spread_percent": 2,      // per-well variation, % (default 0)
//                    "water_peak": {"k_per_cm": 0.18, "baseline_A": 0.04},  // or true
//                    "assay_mode": "water-peak"},   // what ASSAY.json says (see below)
//     "nadh_uM": 250,                          // starting NADH in reaction wells (default 200)
//     "enzyme": {"nM": 5},                     // or {"mg_per_mL": 0.00026, "molar_mass_Da": 52000}
//     "kinetics": {"model": "mixed", "kcat_per_s": 12,    // or "vmax_uM_per_min"
//                  "km_uM": 40, "ki_uM": 3, "alpha": 4},
//     "coupling_tau_min": 0.4,                 // first-order coupling lag τ (default 0: none)
//     "nadh_half_saturation_uM": 0,            // K_N of the NADH limit (default 0: a clamp)
//     "blank_drift_A_per_min": -0.0004,        // slope of a blank well (default 0)
//     "background_A": 0.04,                    // plate and buffer absorbance (default 0.04)
//     "noise_sd_A": 0.002,                     // Gaussian read noise σ (default 0)
//     "seed": 20240611,                        // random seed, 0 .. 2^53 (default 1)
//     "detector": {"ceiling_A": 3.0,           // readings above it are overflows (default 4.0)
//                  "overflow_marker": "OVER",  // written for them (default "OVER")
//                  "decimals": 4},             // absorbance places written (default 4)
//     "design": {"substrate_uM": [5, 10, 20, 40, 80, 160, 320, 640],   // required
//                "inhibitor_uM": [0, 2, 6],    // default [0]
//                "replicates": 2,              // default 1
//                "blanks_per_substrate": 1,    // blank wells at each substrate level (default 0)
//                "blank_substrate_uM": [640],  // further blank wells, one per entry (default [])
//                "no_substrate": 2,            // enzyme without substrate (default 0)
//                "standards_uM": [0, 50, 100, 150, 200, 250],   // NADH standards (default [])
//                "standard_replicates": 1,     // default 1
//                "saturating": {"wells": 2, "start_A": 3.5}},   // default no such wells
//     "analysis": {"blank": "matched", "rate_method": "auto",
//                  "absorbance_ceiling": 2.5} }  // copied into ASSAY.json (optional)
//
// Kinetic models (ids and equations as DESIGN §2; v in µM/min, S and I in µM):
//   michaelis-menten      v = Vmax·S/(Km + S)                       keys km_uM
//   substrate-inhibition  v = Vmax·S/(Km + S + S²/Ksi)              km_uM, ksi_uM
//   hill                  v = Vmax·Sʰ/(K½ʰ + Sʰ)                    khalf_uM, hill_h
//   competitive           v = Vmax·S/(Km(1 + I/Ki) + S)             km_uM, ki_uM
//   uncompetitive         v = Vmax·S/(Km + S(1 + I/Ki))             km_uM, ki_uM
//   noncompetitive        v = Vmax·S/((Km + S)(1 + I/Ki))           km_uM, ki_uM
//   mixed                 v = Vmax·S/(Km(1 + I/Ki) + S(1 + I/(α·Ki)))  km_uM, ki_uM, alpha
// plus exactly one of vmax_uM_per_min or kcat_per_s (Vmax = kcat × 60 s/min ×
// [E] in µM; needs the enzyme's molar concentration: "nM", or "mg_per_mL" with
// "molar_mass_Da"). Vmax is for the scenario's enzyme concentration.
//
// Files: a string "long" | "wide" | "grid" | "xlsx", or an object with
// "format" (one of those) and, for text formats, "delimiter" ("comma",
// "semicolon", "tab"; default comma), "decimal_comma" (only with semicolon or
// tab), "line_end" ("lf", "crlf"), "bom" (UTF-8 byte order mark); for xlsx,
// "table" ("long", "wide", "grid"; default "long"); for all, "time"
// ("seconds", "minutes", "clock"; long and wide tables) and "name" (a plain
// file name). Default names: <stem>_<format>.csv (".txt" when tab
// separated), <stem>_<table>.xlsx; a repeated name gets _2, _3, ... The names
// layout.csv, ASSAY.json and truth.json are taken.
//
// Pathlength: "cm" (fixed) or "volume_uL" + "well_area_cm2" (l = V·1e-3/area),
// not both. "spread_percent" s gives each well with liquid
// l = l_nominal·(1 + s/100·z), z standard normal clipped to ±3. "water_peak"
// adds channels at sample_nm (977) and reference_nm (900) with
// A_reference = baseline_A and A_sample = baseline_A + k_per_cm·l (+ noise);
// keys "k_per_cm" (0.18), "baseline_A" (0.04), "sample_nm", "reference_nm".
// "assay_mode" is what ASSAY.json tells the analysis: "fixed", "geometry",
// "water-peak" (needs water_peak) or "standards" (needs ≥ 3 distinct
// standards); default water-peak when there is a water peak, else geometry
// when a volume is given, else fixed. (The analysis then meets the per-well
// spread as an error source, unless the mode can see it.)
//
// Where the wells go ("fill": "rows" runs A01, A02, ... A12, B01; "columns"
// runs A01, B01, ... H01, A02), starting at A01:
//   1. samples: for each inhibitor level (in the order given), for each
//      replicate, one series over the substrate levels (in the order given);
//      a series never straddles two rows (columns for "columns") when it
//      fits in one: if it does not fit in what is left of the current row it
//      starts the next, so 8 levels on a 96-well plate take A01-A08, then
//      B01-B08, and 12 levels on a 1536-well plate take four to a row;
//   2. then, starting on a fresh row, the control wells one after another:
//      saturating wells (top substrate level, no inhibitor, NADH raised so the
//      first absorbance is start_A); blanks (no enzyme): blanks_per_substrate
//      rounds over the substrate levels, then blank_substrate_uM; no-substrate
//      wells (enzyme, no substrate); NADH standards: standard_replicates
//      rounds over standards_uM (no enzyme, no substrate);
//   3. every other well is empty (read: background and noise only).
// A design that does not fit the plate is an InputError at "design".
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "fitting/assay_settings.h"
#include "importers/plate.h"
#include "simulate/plate_writer.h"

namespace ratewell {

// The rate laws the simulator knows (DESIGN §2 ids; a subset of the fitted
// models of fitting/kinetic_models.h, kept apart so the simulated truth does
// not depend on the code it checks).
enum class RateLaw {
  kMichaelisMenten,      // "michaelis-menten"
  kSubstrateInhibition,  // "substrate-inhibition"
  kHill,                 // "hill"
  kCompetitive,          // "competitive"
  kUncompetitive,        // "uncompetitive"
  kNoncompetitive,       // "noncompetitive"
  kMixed,                // "mixed"
};
const char* RateLawToString(RateLaw model);
bool StringToRateLaw(std::string_view text, RateLaw* model);

// The kinetic truth of a scenario. Unused parameters keep their defaults.
struct KineticTruth {
  RateLaw model = RateLaw::kMichaelisMenten;
  // Maximal rate at the scenario's enzyme concentration, µM/min (given, or
  // kcat × 60 × [E]µM).
  double vmax_uM_per_min = 0.0;
  // Turnover number when the scenario gave it, s⁻¹.
  std::optional<double> kcat_per_s;
  double km_uM = 0.0;   // Km; K½ for hill
  double ki_uM = 0.0;   // inhibition constant (inhibition models)
  double alpha = 1.0;   // mixed: αKi is the inhibitor's constant for ES
  double ksi_uM = 0.0;  // substrate-inhibition constant
  double hill_h = 1.0;  // Hill coefficient
};

// v_E(S, I) in µM/min by the model's equation (table above). S below 0 counts
// as 0 (the integrator may overshoot by rounding). Vmax = 0 gives 0.
double EnzymeRate(const KineticTruth& kinetics, double substrate_uM, double inhibitor_uM);

// One plate file to write.
struct PlateFileSpec {
  std::string format;     // "long", "wide", "grid" or "xlsx", as written in the scenario
  std::string file_name;  // plain name inside the output folder
  bool xlsx = false;
  PlateTableOptions table;  // layout, time style (decimals, marker, preamble: from the scenario)
  TextFormat text;          // text files only
};

struct Scenario {
  std::string source;  // the file name as given, for messages and truth.json
  std::string run;
  std::string lab;

  PlateGeometry geometry;
  std::string file_stem = "plate";
  bool fill_by_columns = false;

  struct Reads {
    double interval_s = 0.0;     // > 0
    int count = 0;               // ≥ 2
    double start_delay_s = 0.0;  // ≥ 0; times in files count from mixing
    std::optional<double> temperature_C;
  } reads;

  std::vector<PlateFileSpec> files;
  bool preamble = true;

  AssaySettings::Detection detection;
  std::vector<double> extra_wavelengths_nm;

  struct Pathlength {
    std::optional<double> cm;             // fixed
    std::optional<double> volume_uL;      // geometry
    std::optional<double> well_area_cm2;  // geometry
    double spread_percent = 0.0;
    bool water_peak = false;
    double water_k_per_cm = kWaterPeakAbsorbancePerCm;
    double water_baseline_A = 0.04;
    double water_sample_nm = kWaterPeakSampleNm;
    double water_reference_nm = kWaterPeakReferenceNm;
    PathlengthMode assay_mode = PathlengthMode::kFixed;

    // The nominal pathlength, cm: cm, or volume_uL × 1e-3 / well_area_cm2.
    double NominalCm() const;
  } pathlength;

  double nadh_uM = 200.0;
  AssaySettings::Enzyme enzyme;
  KineticTruth kinetics;
  double coupling_tau_min = 0.0;
  double nadh_half_saturation_uM = 0.0;
  double blank_drift_A_per_min = 0.0;
  double background_A = 0.04;
  double noise_sd_A = 0.0;
  std::uint64_t seed = 1;

  struct Detector {
    double ceiling_A = 4.0;
    std::string overflow_marker = "OVER";
    int decimals = 4;
  } detector;

  struct Design {
    std::vector<double> substrate_uM;
    std::vector<double> inhibitor_uM = {0.0};
    int replicates = 1;
    int blanks_per_substrate = 0;
    std::vector<double> blank_substrate_uM;
    int no_substrate = 0;
    std::vector<double> standards_uM;
    int standard_replicates = 1;
    int saturating_wells = 0;
    double saturating_start_A = 3.5;
  } design;

  struct Analysis {
    BlankMode blank = BlankMode::kPlateMean;
    RateMethod rate_method = RateMethod::kAuto;
    double absorbance_ceiling = kDefaultAbsorbanceCeiling;
  } analysis;

  // The settings written to ASSAY.json: detection, pathlength (assay_mode with
  // the nominal values), enzyme and the analysis keys.
  AssaySettings ToAssaySettings() const;
};

// Parses scenario text; file names the source in messages and is kept in
// Scenario::source. Throws InputError as described at the top.
Scenario ParseScenario(std::string_view json_text, const std::string& file);

// Reads a scenario file (UTF-8). A file that cannot be read is an InputError.
Scenario ReadScenarioFile(const std::string& path);

}  // namespace ratewell
