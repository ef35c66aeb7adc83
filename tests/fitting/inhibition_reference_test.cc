// Global inhibition fits, the four-parameter logistic and Morrison's tight
// binding against SciPy's results on invented data (tests/data/inhibition:
// SciPy 1.10.1 curve_fit + root polish, cross-checked with R 4.2.2 to 14–16
// digits; computed, not published). ratewell finds its own starting values;
// the reference's starts are not used.
#include <cmath>
#include <fstream>
#include <functional>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include "fitting/kinetic_models.h"
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

const std::string kDataDir = std::string(RATEWELL_TEST_DATA_DIR) + "/inhibition/";

json Reference(const std::string& name) {
  std::ifstream in(kDataDir + name + ".json");
  return json::parse(in);
}

// Rows of a CSV with a header, as name → column.
std::map<std::string, std::vector<double>> ReadCsv(const std::string& name) {
  std::ifstream in(kDataDir + name + ".csv");
  std::string line;
  std::getline(in, line);
  std::vector<std::string> header;
  std::stringstream head(line);
  for (std::string cell; std::getline(head, cell, ',');) header.push_back(cell);
  std::map<std::string, std::vector<double>> columns;
  while (std::getline(in, line)) {
    if (line.empty()) continue;
    std::stringstream row(line);
    size_t c = 0;
    for (std::string cell; std::getline(row, cell, ','); ++c) {
      columns[header.at(c)].push_back(std::stod(cell));
    }
  }
  return columns;
}

// Points from the S×I grids (columns S, I, v) or the dose–response files.
KineticData GridData(const std::string& name) {
  auto columns = ReadCsv(name);
  KineticData data;
  data.rate_unit = "rate units";
  data.concentration_unit = "conc units";
  for (size_t k = 0; k < columns["v"].size(); ++k) {
    KineticObservation point;
    point.substrate_uM = columns["S"][k];
    point.inhibitor_uM = columns["I"][k];
    point.rate = columns["v"][k];
    data.points.push_back(point);
  }
  return data;
}

KineticData DoseResponseData(const std::string& name, const std::string& x_column,
                             const std::string& y_column) {
  auto columns = ReadCsv(name);
  KineticData data;
  data.concentration_unit = name == "morrison-tight-binding" ? "nM" : "uM";
  data.rate_unit = name == "morrison-tight-binding" ? "fraction of v0" : "% activity";
  for (size_t k = 0; k < columns[y_column].size(); ++k) {
    KineticObservation point;
    point.substrate_uM = 0.0;
    point.inhibitor_uM = columns[x_column][k];
    point.rate = columns[y_column][k];
    data.points.push_back(point);
  }
  return data;
}

struct ReferenceCase {
  std::string label;
  std::string file;
  std::string block;  // fit block in the JSON
  KineticModel model;
  std::function<KineticData()> data;
  std::function<void(FitOptions*)> configure;
  std::map<std::string, std::string> names;  // SciPy name → ratewell name
};

std::vector<ReferenceCase> Cases() {
  const auto grid = [](const std::string& name) { return [name] { return GridData(name); }; };
  const auto ic50 = [] { return DoseResponseData("ic50-4pl", "x", "y"); };
  const auto morrison = [] { return DoseResponseData("morrison-tight-binding", "I_nM", "y"); };
  const auto nothing = [](FitOptions*) {};
  // Morrison fits of fractional activity hold v0 at 1 unless v0 is fitted;
  // E = 10 nM is the reference's fixed value and start.
  const auto v0_fixed = [](FitOptions* o) {
    o->enzyme_uM = 10.0;
    o->parameters.push_back({"v0", 1.0, {}, {}, {}});
  };
  return {
      {"CompetitiveGrid", "competitive-grid", "fit", KineticModel::kCompetitive,
       grid("competitive-grid"), nothing, {{"Vmax", "Vmax"}, {"Km", "Km"}, {"Ki", "Ki"}}},
      {"MixedGrid", "mixed-grid", "fit", KineticModel::kMixed, grid("mixed-grid"), nothing,
       {{"Vmax", "Vmax"}, {"Km", "Km"}, {"Ki", "Ki"}, {"alpha", "alpha"}}},
      {"FourParameterLogistic", "ic50-4pl", "fit_IC50", KineticModel::kFourParameterLogistic,
       ic50, nothing, {{"Top", "top"}, {"Bottom", "bottom"}, {"IC50", "IC50"}, {"Hill", "h"}}},
      {"FourParameterLogisticLog10", "ic50-4pl", "fit_log10_IC50",
       KineticModel::kFourParameterLogisticLog10, ic50, nothing,
       {{"Top", "top"}, {"Bottom", "bottom"}, {"log10_IC50", "log10_IC50"}, {"Hill", "h"}}},
      {"MorrisonEnzymeFixed", "morrison-tight-binding", "fit_Kiapp_E_fixed",
       KineticModel::kMorrison, morrison, v0_fixed, {{"Kiapp", "Kiapp"}}},
      {"MorrisonEnzymeFitted", "morrison-tight-binding", "fit_Kiapp_and_E",
       KineticModel::kMorrison, morrison,
       [v0_fixed](FitOptions* o) {
         v0_fixed(o);
         o->fit_enzyme = true;
       },
       {{"Kiapp", "Kiapp"}, {"E", "E"}}},
      {"MorrisonAllFitted", "morrison-tight-binding", "fit_v0_Kiapp_and_E",
       KineticModel::kMorrison, morrison,
       [](FitOptions* o) {
         o->enzyme_uM = 10.0;
         o->fit_enzyme = true;
       },
       {{"v0", "v0"}, {"Kiapp", "Kiapp"}, {"E", "E"}}},
  };
}

class InhibitionReferenceTest : public ::testing::TestWithParam<ReferenceCase> {
 protected:
  KineticFit Fit(IntervalMethod method) const {
    FitOptions options;
    options.interval_method = method;
    GetParam().configure(&options);
    return FitKineticModel(GetParam().data(), GetParam().model, options);
  }
  json Block() const { return Reference(GetParam().file)[GetParam().block]; }
};

void ExpectRelative(double actual, double expected, double tolerance, const std::string& what) {
  EXPECT_NEAR(actual, expected, tolerance * std::abs(expected)) << what;
}

TEST_P(InhibitionReferenceTest, EstimatesAndStandardErrorsMatchSciPy) {
  const json ref = Block();
  const KineticFit fit = Fit(IntervalMethod::kAsymptotic);
  ASSERT_TRUE(fit.summary.IsSolutionUsable()) << fit.summary.FullReport();
  EXPECT_TRUE(fit.converged);
  EXPECT_EQ(fit.n, ref["n"].get<int>());
  EXPECT_EQ(fit.num_parameters, ref["n_parameters"].get<int>());
  EXPECT_EQ(fit.dof, ref["df"].get<int>());
  ExpectRelative(fit.ssr, ref["rss"], kEstimateTolerance, "RSS");
  for (const auto& [scipy_name, name] : GetParam().names) {
    const ParameterEstimate* p = fit.Find(name);
    ASSERT_NE(p, nullptr) << name;
    ExpectRelative(p->value, ref["estimate"][scipy_name], kEstimateTolerance, name);
    ASSERT_TRUE(p->se_determined) << name << ": " << p->se_reason;
    ExpectRelative(p->se, ref["std_error"][scipy_name], kStandardErrorTolerance, name + " SE");
    ASSERT_TRUE(p->ci.determined) << name;
    ExpectRelative(p->ci.lower, ref["ci95_asymptotic"][scipy_name][0], kAsymptoticTolerance,
                   name + " asymptotic lower");
    ExpectRelative(p->ci.upper, ref["ci95_asymptotic"][scipy_name][1], kAsymptoticTolerance,
                   name + " asymptotic upper");
  }
}

TEST_P(InhibitionReferenceTest, ProfileLimitsMatchSciPysProfileT) {
  const json ref = Block();
  const KineticFit fit = Fit(IntervalMethod::kProfile);
  ASSERT_TRUE(fit.summary.IsSolutionUsable()) << fit.summary.FullReport();
  for (const auto& [scipy_name, name] : GetParam().names) {
    const ParameterEstimate* p = fit.Find(name);
    ASSERT_NE(p, nullptr) << name;
    ASSERT_TRUE(p->ci.determined) << name << ": " << p->ci.reason;
    EXPECT_EQ(p->ci.method, IntervalMethod::kProfile);
    ExpectRelative(p->ci.lower, ref["ci95_profile_t"][scipy_name][0], kProfileTolerance,
                   name + " profile lower");
    ExpectRelative(p->ci.upper, ref["ci95_profile_t"][scipy_name][1], kProfileTolerance,
                   name + " profile upper");
  }
}

INSTANTIATE_TEST_SUITE_P(SciPyFits, InhibitionReferenceTest, ::testing::ValuesIn(Cases()),
                         [](const auto& param_info) { return param_info.param.label; });

TEST(InhibitionReference, Log10FormBackTransformsTheIC50Interval) {
  // SciPy 1.10.1 fit of the log10 form: IC50 = 10^log10_IC50 with the
  // asymptotic log-scale interval back-transformed, and the profile interval
  // (the same in either parameterisation).
  const json ref = Reference("ic50-4pl")["fit_log10_IC50"]["IC50_back_transformed"];
  const KineticData data = DoseResponseData("ic50-4pl", "x", "y");
  FitOptions options;
  options.interval_method = IntervalMethod::kAsymptotic;
  const KineticFit asymptotic =
      FitKineticModel(data, KineticModel::kFourParameterLogisticLog10, options);
  const ParameterEstimate* ic50 = asymptotic.Find("IC50");
  ASSERT_NE(ic50, nullptr);
  ExpectRelative(ic50->value, ref["estimate"], kEstimateTolerance, "IC50");
  ASSERT_TRUE(ic50->ci.determined);
  ExpectRelative(ic50->ci.lower, ref["ci95_from_log10_asymptotic"][0], kAsymptoticTolerance,
                 "IC50 lower");
  ExpectRelative(ic50->ci.upper, ref["ci95_from_log10_asymptotic"][1], kAsymptoticTolerance,
                 "IC50 upper");
  EXPECT_NE(ic50->ci.note.find("back-transformed"), std::string::npos) << ic50->ci.note;
  // Delta method: SE(IC50) = ln(10)·IC50·SE(log10 IC50).
  const double se_log = Reference("ic50-4pl")["fit_log10_IC50"]["std_error"]["log10_IC50"];
  ExpectRelative(ic50->se, std::log(10.0) * ic50->value * se_log, kStandardErrorTolerance,
                 "IC50 SE");

  options.interval_method = IntervalMethod::kProfile;
  const KineticFit profile =
      FitKineticModel(data, KineticModel::kFourParameterLogisticLog10, options);
  const ParameterEstimate* ic50p = profile.Find("IC50");
  ASSERT_TRUE(ic50p->ci.determined) << ic50p->ci.reason;
  ExpectRelative(ic50p->ci.lower, ref["ci95_from_log10_profile"][0], kProfileTolerance,
                 "IC50 profile lower");
  ExpectRelative(ic50p->ci.upper, ref["ci95_from_log10_profile"][1], kProfileTolerance,
                 "IC50 profile upper");
}

TEST(InhibitionReference, CovarianceOfTheMixedFitMatchesSciPy) {
  const json ref = Reference("mixed-grid")["fit"]["covariance"];
  FitOptions options;
  options.interval_method = IntervalMethod::kAsymptotic;
  const KineticFit fit = FitKineticModel(GridData("mixed-grid"), KineticModel::kMixed, options);
  ASSERT_EQ(fit.covariance_names,
            (std::vector<std::string>{"Vmax", "Km", "Ki", "alpha"}));
  for (int a = 0; a < 4; ++a) {
    for (int b = 0; b < 4; ++b) {
      ExpectRelative(fit.covariance[a * 4 + b], ref["matrix"][a][b].get<double>(),
                     kStandardErrorTolerance, "covariance");
    }
  }
}

}  // namespace
}  // namespace ratewell
