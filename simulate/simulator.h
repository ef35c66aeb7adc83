// Simulator: a synthetic coupled-assay plate with known truth.
//
// Each well with liquid is a small ODE system (simulate/detail/coupled_assay.h)
// in µM and minutes. The enzyme turns substrate S into product at
// v_E(S, I) (the scenario's rate law, simulate/scenario.h); the product passes
// through the coupling enzymes as a first-order step with time constant τ
// (McClure 1969), held as an intermediate X; each coupled turnover oxidises
// per_turnover NADH (N):
//
//   S' = −v_E(S, I)
//   X' = v_E − X/τ · g(N)
//   N' = −per_turnover · X/τ · g(N) + d·g(N)          (d < 0: NADH lost)
//
// With τ = 0 the intermediate is skipped and v_E feeds the NADH step
// directly. g(N) is the NADH limit: a clamp (1 while N > 0, 0 at N = 0; the
// default) or N/(N + K_N) with nadh_half_saturation_uM = K_N > 0; when NADH
// runs out the signal stops falling. d is the blank drift, the non-enzymatic
// NADH change in every well with NADH (samples, blanks, no-substrate wells,
// standards alike): d = blank_drift_A_per_min / (ε · l_nominal · 1e-6) µM/min,
// so a blank at the nominal pathlength falls by blank_drift_A_per_min per
// minute. For direction "formed" the NADH term is +per_turnover·X/τ, not
// limited (NAD⁺ in excess). The absorbance read at the detection wavelength is
//
//   A = ε · l · N · 1e-6 + background_A + σ·z,
//
// z standard normal, then rounded to detector.decimals places; a reading above
// detector.ceiling_A is stored as kSaturated (and written as the overflow
// marker). Empty wells read background_A + σ·z. The water-peak channels read
// water baseline_A (+ k_per_cm · l at the sample wavelength) + σ·z, extra
// channels background_A + σ·z.
//
// Initial conditions: S = the well's substrate, X = 0, N = nadh_uM (a
// standard: its standard_uM; a saturating well: the NADH giving start_A at its
// pathlength). Reads at t_k = start_delay_s + k·interval_s from mixing.
// Integration: Dormand–Prince 5(4), error-controlled, stepping onto each
// read time; global error ≈ 1e-10 relative (tests check McClure's lag
// curve and the Schnell–Mendoza Lambert-W solution).
//
// Randomness: one std::mt19937_64 seeded with `seed`, turned into normal
// deviates by our own Box–Muller transform (the standard library's normal
// distribution is not the same everywhere). Draw order: when spread_percent
// > 0, one deviate per well in index order for the pathlength
// (l = l_nominal·(1 + spread/100·z), z clipped to ±3, wells with liquid only
// use theirs); then, when σ > 0, one per point: channels in ascending
// wavelength, wells in index order, reads in time order. The same scenario
// and seed give byte-identical files.
//
// truth.json holds, per well: role, substrate_uM, inhibitor_uM, enzyme_nM,
// pathlength_cm, nadh_start_uM and rate_uM_per_min, the true initial rate of
// product formation v_E(S0, I) (0 for blanks and no-substrate wells, null for
// standards and empty wells) - the number `analyze` must recover; per plate
// the kinetic truth (model, Vmax µM/min, Km, Ki, ...), τ, σ, seed, ε and the
// pathlength; and what each written file is.
//
// Example:
//   SimulationOutput out = RunScenarioFile("scenario.json", "sim-out");
//   for (const std::string& file : out.files_written) std::cout << file << "\n";
#pragma once

#include <functional>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "fitting/assay_settings.h"
#include "importers/layout.h"
#include "importers/plate.h"
#include "simulate/scenario.h"

namespace ratewell {

// The truth about one well.
struct WellTruth {
  int well = -1;     // index = row * columns + column
  std::string name;  // "A01"
  WellRole role = WellRole::kEmpty;
  double substrate_uM = 0.0;
  double inhibitor_uM = 0.0;
  bool has_enzyme = false;
  std::optional<double> enzyme_nM;    // when the enzyme is in the well and its molar amount known
  std::optional<double> standard_uM;  // standards only
  double pathlength_cm = 0.0;         // 0 for an empty well (no liquid)
  double nadh_start_uM = 0.0;
  // v_E(S0, I), µM/min: the initial rate of product formation. nullopt for
  // standards and empty wells.
  std::optional<double> rate_uM_per_min;
  bool saturating = false;
  double substrate_at_last_read_uM = 0.0;
  double nadh_at_last_read_uM = 0.0;
  int saturated_points = 0;  // at the detection wavelength
  std::string group;
};

struct SimulatedPlate {
  Plate plate;                   // values as written (rounded), saturated points marked
  Layout layout;                 // what the layout file says
  AssaySettings assay;           // what ASSAY.json says
  std::vector<WellTruth> wells;  // every well, index order
  double blank_drift_uM_per_min = 0.0;
};

// Simulates the plate. progress (if set) is called with fractions in [0, 1].
SimulatedPlate SimulatePlate(const Scenario& scenario,
                             const std::function<void(double fraction)>& progress = {});

// One file of a simulation and what it is.
struct WrittenFile {
  std::string file_name;  // inside the output folder
  nlohmann::ordered_json description;
};

// The layout in list form: header well,role,substrate_uM,inhibitor_uM,
// enzyme_nM,standard_uM,group; every well of the plate (empty ones with role
// empty and no values), a comment line first.
std::string LayoutListCsv(const Layout& layout, const std::string& comment);

// truth.json (schema 1) for a simulated plate and the files written with it.
nlohmann::ordered_json TruthJson(const Scenario& scenario, const SimulatedPlate& simulated,
                                 const std::vector<WrittenFile>& files);

struct SimulationOutput {
  std::string out_dir;
  std::vector<std::string> files_written;  // paths (out_dir/name), in writing order
  std::string run;
  int wells_used = 0;  // wells with liquid
  int reads = 0;
  int channels = 0;
  long saturated_points = 0;
};

// Writes the plate files, layout.csv, ASSAY.json and truth.json (last) into
// out_dir, creating it if missing. Never writes over a file listed in
// protected_inputs (InputError). Throws InputError when out_dir cannot be
// created, std::runtime_error when a file cannot be written.
SimulationOutput WriteSimulation(const Scenario& scenario, const SimulatedPlate& simulated,
                                 const std::string& out_dir,
                                 const std::vector<std::string>& protected_inputs = {},
                                 const std::function<void(double fraction)>& progress = {});

// `ratewell simulate --scenario FILE --out DIR`: reads the scenario, simulates
// and writes. InputError for a bad scenario (file, line, column, key) or an
// output that would replace the scenario file.
SimulationOutput RunScenarioFile(const std::string& scenario_path, const std::string& out_dir,
                                 const std::function<void(double fraction)>& progress = {});

}  // namespace ratewell
