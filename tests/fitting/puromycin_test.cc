// Puromycin (Treloar 1974, tabulated by Bates & Watts 1988, Appendix A1.3):
// published data. The reference fits are computed, not published: R 4.2.2
// nls + MASS 7.3.58.2, polished by Gauss–Newton steps, cross-checked with
// SciPy 1.10.1 (tests/data/puromycin/README.md). They are good to about 14
// digits, so the tolerances below test ratewell, not the reference.
#include <cmath>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include "fitting/kinetic_models.h"
#include "fitting/model_selection.h"
#include "fitting/nonlinear_fit.h"

#include "tests/fitting/reference_tolerances.h"

namespace ratewell {
namespace {

using nlohmann::json;

// Tolerances and why: tests/fitting/reference_tolerances.h.
using testing::kAsymptoticTolerance;
using testing::kEstimateTolerance;
using testing::kProfileTolerance;
using testing::kStandardErrorTolerance;

const std::string kDataDir = std::string(RATEWELL_TEST_DATA_DIR) + "/puromycin/";

struct Row {
  double conc = 0.0;
  double rate = 0.0;
  std::string state;
};

std::vector<Row> ReadRows() {
  std::ifstream in(kDataDir + "puromycin.csv");
  std::vector<Row> rows;
  std::string line;
  std::getline(in, line);  // header: conc_ppm,rate_counts_per_min_per_min,state
  while (std::getline(in, line)) {
    if (line.empty()) continue;
    std::stringstream fields(line);
    Row row;
    std::string conc, rate;
    std::getline(fields, conc, ',');
    std::getline(fields, rate, ',');
    std::getline(fields, row.state, ',');
    row.conc = std::stod(conc);
    row.rate = std::stod(rate);
    rows.push_back(row);
  }
  return rows;
}

json Reference() {
  std::ifstream in(kDataDir + "reference-fits.json");
  return json::parse(in);
}

// The rows of one state (or all with groups "untreated", "treated"), in ppm
// and counts/min/min.
KineticData Data(const std::string& state) {
  KineticData data;
  data.rate_unit = "counts/min/min";
  data.concentration_unit = "ppm";
  if (state.empty()) data.group_names = {"untreated", "treated"};
  for (const Row& row : ReadRows()) {
    if (!state.empty() && row.state != state) continue;
    KineticObservation point;
    point.substrate_uM = row.conc;
    point.rate = row.rate;
    point.group = state.empty() && row.state == "treated" ? 1 : 0;
    point.label = row.state;
    data.points.push_back(point);
  }
  return data;
}

void ExpectRelative(double actual, double expected, double tolerance, const std::string& what) {
  EXPECT_NEAR(actual, expected, tolerance * std::abs(expected)) << what;
}

TEST(Puromycin, DataHaveTheTwentyThreePublishedRows) {
  const std::vector<Row> rows = ReadRows();
  ASSERT_EQ(rows.size(), 23u);
  EXPECT_EQ(Data("treated").points.size(), 12u);
  EXPECT_EQ(Data("untreated").points.size(), 11u);
}

class PuromycinStateTest : public ::testing::TestWithParam<std::string> {};

TEST_P(PuromycinStateTest, MichaelisMentenMatchesTheReferenceFit) {
  const std::string state = GetParam();
  const json ref = Reference()["models"][state + "_michaelis_menten"]["reference_values"];
  FitOptions options;
  options.interval_method = IntervalMethod::kProfile;
  const KineticFit fit = FitKineticModel(Data(state), KineticModel::kMichaelisMenten, options);
  ASSERT_TRUE(fit.summary.IsSolutionUsable()) << fit.summary.FullReport();
  EXPECT_TRUE(fit.converged);
  EXPECT_EQ(fit.n, state == "treated" ? 12 : 11);
  EXPECT_EQ(fit.dof, ref["df"].get<int>());
  ExpectRelative(fit.ssr, ref["rss"], kEstimateTolerance, "RSS");
  ExpectRelative(fit.residual_sd, ref["residual_standard_error"], kEstimateTolerance, "s");

  const ParameterEstimate* vmax = fit.Find("Vmax");
  const ParameterEstimate* km = fit.Find("Km");
  ASSERT_NE(vmax, nullptr);
  ASSERT_NE(km, nullptr);
  EXPECT_EQ(vmax->unit, "counts/min/min");
  EXPECT_EQ(km->unit, "ppm");
  ExpectRelative(vmax->value, ref["estimate"]["Vm"], kEstimateTolerance, "Vmax");
  ExpectRelative(km->value, ref["estimate"]["K"], kEstimateTolerance, "Km");
  ASSERT_TRUE(vmax->se_determined && km->se_determined);
  ExpectRelative(vmax->se, ref["std_error"]["Vm"], kStandardErrorTolerance, "SE Vmax");
  ExpectRelative(km->se, ref["std_error"]["K"], kStandardErrorTolerance, "SE Km");

  // Exact profile-t limits (not R's spline-interpolated confint).
  ASSERT_TRUE(vmax->ci.determined) << vmax->ci.reason;
  ASSERT_TRUE(km->ci.determined) << km->ci.reason;
  EXPECT_EQ(vmax->ci.method, IntervalMethod::kProfile);
  ExpectRelative(vmax->ci.lower, ref["ci95_profile_t"]["Vm"][0], kProfileTolerance, "Vmax lo");
  ExpectRelative(vmax->ci.upper, ref["ci95_profile_t"]["Vm"][1], kProfileTolerance, "Vmax hi");
  ExpectRelative(km->ci.lower, ref["ci95_profile_t"]["K"][0], kProfileTolerance, "Km lo");
  ExpectRelative(km->ci.upper, ref["ci95_profile_t"]["K"][1], kProfileTolerance, "Km hi");
}

TEST_P(PuromycinStateTest, AsymptoticIntervalsMatchTheReference) {
  const std::string state = GetParam();
  const json ref = Reference()["models"][state + "_michaelis_menten"]["reference_values"];
  FitOptions options;
  options.interval_method = IntervalMethod::kAsymptotic;
  const KineticFit fit = FitKineticModel(Data(state), KineticModel::kMichaelisMenten, options);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  for (const auto& [name, ref_name] : {std::pair{"Vmax", "Vm"}, std::pair{"Km", "K"}}) {
    const ParameterEstimate* p = fit.Find(name);
    ASSERT_TRUE(p->ci.determined);
    EXPECT_EQ(p->ci.method, IntervalMethod::kAsymptotic);
    ExpectRelative(p->ci.lower, ref["ci95_asymptotic"][ref_name][0], kAsymptoticTolerance, name);
    ExpectRelative(p->ci.upper, ref["ci95_asymptotic"][ref_name][1], kAsymptoticTolerance, name);
  }
  // R's covariance matrix (from nls, good to about 9 digits).
  const json vcov = Reference()["models"][state + "_michaelis_menten"]["R_nls"]["vcov"]["matrix"];
  ASSERT_EQ(fit.covariance.size(), 4u);
  EXPECT_EQ(fit.covariance_names, (std::vector<std::string>{"Vmax", "Km"}));
  ExpectRelative(fit.covariance[1], vcov[0][1].get<double>(), 1e-6, "cov(Vmax, Km)");
}

INSTANTIATE_TEST_SUITE_P(BothStates, PuromycinStateTest,
                         ::testing::Values("treated", "untreated"));

TEST(Puromycin, SharedKmWithVmaxPerStateMatchesTheReference) {
  // Bates & Watts' model: one K, Vm by state. ratewell fits Vmax[untreated]
  // (R's Vm), Vmax[treated] (R's Vm + delV) and one Km.
  const json ref = Reference()["models"]["shared_K_Vm_by_state"]["reference_values"];
  FitOptions options;
  options.per_group = {"Vmax"};
  options.interval_method = IntervalMethod::kProfile;
  const KineticFit fit = FitKineticModel(Data(""), KineticModel::kMichaelisMenten, options);
  ASSERT_TRUE(fit.summary.IsSolutionUsable()) << fit.summary.FullReport();
  ASSERT_EQ(fit.parameters.size(), 3u);
  EXPECT_EQ(fit.parameters[0].name, "Vmax[untreated]");
  EXPECT_EQ(fit.parameters[0].group, "untreated");
  EXPECT_EQ(fit.parameters[1].name, "Vmax[treated]");
  EXPECT_EQ(fit.parameters[2].name, "Km");
  EXPECT_EQ(fit.dof, 20);
  ExpectRelative(fit.ssr, ref["rss"], kEstimateTolerance, "RSS");

  const ParameterEstimate& vu = fit.parameters[0];
  const ParameterEstimate& vt = fit.parameters[1];
  const ParameterEstimate& km = fit.parameters[2];
  const double vm = ref["estimate"]["Vm"], del = ref["estimate"]["delV"];
  ExpectRelative(vu.value, vm, kEstimateTolerance, "Vmax untreated");
  ExpectRelative(vt.value, vm + del, kEstimateTolerance, "Vmax treated");
  ExpectRelative(km.value, ref["estimate"]["K"], kEstimateTolerance, "Km");
  ExpectRelative(vu.se, ref["std_error"]["Vm"], kStandardErrorTolerance, "SE Vmax untreated");
  ExpectRelative(km.se, ref["std_error"]["K"], kStandardErrorTolerance, "SE Km");
  // SE of Vm + delV in this parameterisation: SciPy 1.10.1, computed
  // (least_squares + root polish of J^T r = 0, s^2 (J^T J)^-1 with
  // parameters (Vm_untreated, Vm_treated, K)).
  ExpectRelative(vt.se, 5.803992869855241, kStandardErrorTolerance, "SE Vmax treated");

  // Profile limits: Vm and K are the reference's exact profile-t limits (a
  // profile does not change when the other parameters are re-expressed).
  ExpectRelative(vu.ci.lower, ref["ci95_profile_t"]["Vm"][0], kProfileTolerance, "Vu lo");
  ExpectRelative(vu.ci.upper, ref["ci95_profile_t"]["Vm"][1], kProfileTolerance, "Vu hi");
  ExpectRelative(km.ci.lower, ref["ci95_profile_t"]["K"][0], kProfileTolerance, "Km lo");
  ExpectRelative(km.ci.upper, ref["ci95_profile_t"]["K"][1], kProfileTolerance, "Km hi");
  // Vm + delV: SciPy 1.10.1, computed (profile by variable projection and
  // brentq, the reference's method; the same script reproduces the
  // reference's Vm limit to the last digit).
  ExpectRelative(vt.ci.lower, 196.39332533261774, kProfileTolerance, "Vt lo");
  ExpectRelative(vt.ci.upper, 221.50875362756602, kProfileTolerance, "Vt hi");
}

TEST(Puromycin, FTestOfSharedAgainstSeparateKmMatchesR) {
  // R 4.2.2 anova() of the two nls fits: F = 1.7181689 on (1, 19), p = 0.20555.
  const json ref = Reference()["F_test_shared_K_vs_separate"];
  FitOptions options;
  options.interval_method = IntervalMethod::kAsymptotic;
  options.per_group = {"Vmax"};
  const KineticFit shared = FitKineticModel(Data(""), KineticModel::kMichaelisMenten, options);
  options.per_group = {"Vmax", "Km"};
  const KineticFit separate = FitKineticModel(Data(""), KineticModel::kMichaelisMenten, options);
  ASSERT_TRUE(shared.summary.IsSolutionUsable());
  ASSERT_TRUE(separate.summary.IsSolutionUsable());
  ExpectRelative(separate.ssr, ref["rss_full"], kEstimateTolerance, "RSS separate");
  const NestedComparison test = ExtraSumOfSquaresTest(shared, separate);
  ASSERT_TRUE(test.computed) << test.reason;
  EXPECT_EQ(test.df_numerator, 1);
  EXPECT_EQ(test.df_denominator, 19);
  ExpectRelative(test.f, ref["F"], 1e-6, "F");
  ExpectRelative(test.p_value, ref["p_value"], 1e-6, "p");
  EXPECT_FALSE(test.rejects_simpler);
  // The separate fit's Km per state equals the single-state fits.
  const json treated = Reference()["models"]["treated_michaelis_menten"]["reference_values"];
  ExpectRelative(separate.Find("Km[treated]")->value, treated["estimate"]["K"],
                 kEstimateTolerance, "Km treated");
}

}  // namespace
}  // namespace ratewell
