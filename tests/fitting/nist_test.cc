// The generic least-squares engine (fitting/detail/fit_engine.h) on the 27
// NIST StRD nonlinear regression problems (tests/data/nist: public-domain
// files, certified to 11 digits), from both of NIST's starting points.
//
// Accuracy is the log relative error LRE = −log10(|est − cert|/|cert|),
// capped at 11 (the certified digits), for every parameter, every standard
// deviation and the residual sum of squares; a problem scores its minimum.
// Requirements (ours): LRE ≥ 6 from start 2 and ≥ 4 from start 1 for every
// lower- and average-difficulty problem; the higher-difficulty problems are
// held to the minimum LRE they reach today (kHigherDifficultyFloor below).
// A run that does not converge scores 0.
//
// Set RATEWELL_NIST_LRE_TABLE=<file> to write the full LRE table as markdown
// (tests/data/nist/LRE.md is that file).
#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <iomanip>
#include <iostream>
#include <map>
#include <numbers>
#include <sstream>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "fitting/detail/fit_engine.h"

namespace ratewell {
namespace {

using detail::GenericFitOptions;
using detail::FitGeneric;
using detail::GenericFit;
using detail::ParameterSpec;

const std::string kNistDir = std::string(RATEWELL_TEST_DATA_DIR) + "/nist/";
// LRE is capped at the number of certified digits.
constexpr double kMaxLre = 11.0;
// Required LRE for lower- and average-difficulty problems (ours, in line
// with the "4 to 6 is good" rule of thumb of published accuracy studies).
constexpr double kRequiredLreStart2 = 6.0;
constexpr double kRequiredLreStart1 = 4.0;

enum class Difficulty { kLower, kAverage, kHigher };

struct NistProblem {
  std::string name;
  Difficulty difficulty;
  std::vector<std::vector<double>> starts;  // [start][parameter]
  std::vector<double> certified;
  std::vector<double> certified_sd;
  double certified_rss = 0.0;
  std::vector<double> y, x1, x2;
};

std::vector<std::string> Lines(const std::string& path) {
  std::ifstream in(path);
  std::vector<std::string> lines;
  for (std::string line; std::getline(in, line);) {
    if (!line.empty() && line.back() == '\r') line.pop_back();  // NIST files are CRLF
    lines.push_back(line);
  }
  return lines;
}

// "… (lines 41 to 43)" → {41, 43}.
std::pair<int, int> LineRange(const std::string& line) {
  const size_t open = line.find("(lines");
  std::istringstream in(line.substr(open + 6));
  int first = 0, last = 0;
  std::string to;
  in >> first >> to >> last;
  return {first, last};
}

double NumberAfter(const std::string& line, char separator) {
  return std::stod(line.substr(line.find(separator) + 1));
}

NistProblem Parse(const std::string& name, Difficulty difficulty) {
  const std::vector<std::string> lines = Lines(kNistDir + name + ".dat");
  NistProblem problem;
  problem.name = name;
  problem.difficulty = difficulty;
  // Lines 5–7: where the starting values, certified values and data are.
  const auto [start_first, start_last] = LineRange(lines.at(4));
  const auto [data_first, data_last] = LineRange(lines.at(6));
  problem.starts.resize(2);
  for (int l = start_first; l <= start_last; ++l) {
    std::istringstream in(lines.at(l - 1).substr(lines.at(l - 1).find('=') + 1));
    double s1, s2, cert, sd;
    in >> s1 >> s2 >> cert >> sd;
    problem.starts[0].push_back(s1);
    problem.starts[1].push_back(s2);
    problem.certified.push_back(cert);
    problem.certified_sd.push_back(sd);
  }
  for (int l = start_last + 1; l <= data_first; ++l) {
    if (lines.at(l - 1).find("Residual Sum of Squares") != std::string::npos) {
      problem.certified_rss = NumberAfter(lines.at(l - 1), ':');
    }
  }
  for (int l = data_first; l <= data_last; ++l) {
    std::istringstream in(lines.at(l - 1));
    double y = 0.0, x1 = 0.0, x2 = 0.0;
    in >> y >> x1;
    if (name == "Nelson") {
      in >> x2;
      y = std::log(y);  // Nelson's model is for log(y)
    }
    problem.y.push_back(y);
    problem.x1.push_back(x1);
    problem.x2.push_back(x2);
  }
  return problem;
}

// The 27 model functions, as written in the files.
struct NistModel {
  std::string name;
  int p = 0;
  std::vector<double> x1, x2;

  int num_parameters() const { return p; }
  int num_observations() const { return static_cast<int>(x1.size()); }

  template <typename T>
  bool Predict(int i, const T* b, T* f) const {
    using std::atan2;
    using std::cos;
    using std::exp;
    using std::pow;
    using std::sin;
    const double x = x1[i];
    const double pi = 3.141592653589793238462643383279;  // as NIST writes it
    if (name == "Misra1a" || name == "BoxBOD") {
      *f = b[0] * (1.0 - exp(-b[1] * x));
    } else if (name == "Misra1b") {
      *f = b[0] * (1.0 - pow(1.0 + b[1] * x / 2.0, -2.0));
    } else if (name == "Misra1c") {
      *f = b[0] * (1.0 - pow(1.0 + 2.0 * b[1] * x, -0.5));
    } else if (name == "Misra1d") {
      *f = b[0] * b[1] * x / (1.0 + b[1] * x);
    } else if (name == "Chwirut1" || name == "Chwirut2") {
      *f = exp(-b[0] * x) / (b[1] + b[2] * x);
    } else if (name == "DanWood") {
      *f = b[0] * pow(T(x), b[1]);
    } else if (name.rfind("Gauss", 0) == 0) {
      *f = b[0] * exp(-b[1] * x) + b[2] * exp(-(x - b[3]) * (x - b[3]) / (b[4] * b[4])) +
           b[5] * exp(-(x - b[6]) * (x - b[6]) / (b[7] * b[7]));
    } else if (name.rfind("Lanczos", 0) == 0) {
      *f = b[0] * exp(-b[1] * x) + b[2] * exp(-b[3] * x) + b[4] * exp(-b[5] * x);
    } else if (name == "ENSO") {
      *f = b[0] + b[1] * cos(2.0 * pi * x / 12.0) + b[2] * sin(2.0 * pi * x / 12.0) +
           b[4] * cos(2.0 * pi * x / b[3]) + b[5] * sin(2.0 * pi * x / b[3]) +
           b[7] * cos(2.0 * pi * x / b[6]) + b[8] * sin(2.0 * pi * x / b[6]);
    } else if (name == "Hahn1" || name == "Thurber") {
      *f = (b[0] + b[1] * x + b[2] * x * x + b[3] * x * x * x) /
           (1.0 + b[4] * x + b[5] * x * x + b[6] * x * x * x);
    } else if (name == "Kirby2") {
      *f = (b[0] + b[1] * x + b[2] * x * x) / (1.0 + b[3] * x + b[4] * x * x);
    } else if (name == "MGH17") {
      *f = b[0] + b[1] * exp(-x * b[3]) + b[2] * exp(-x * b[4]);
    } else if (name == "Nelson") {
      *f = b[0] - b[1] * x * exp(-b[2] * x2[i]);
    } else if (name == "Roszman1") {
      // arctan[b3/(x − b4)] as the two-argument arctangent: the certified
      // b1 = 1.2019… lies on the branch (0, π) for x − b4 < 0 (the one-
      // argument form fits equally well with b1 smaller by exactly 1).
      *f = b[0] - b[1] * x - atan2(b[2], x - b[3]) / pi;
    } else if (name == "Bennett5") {
      *f = b[0] * pow(b[1] + x, -1.0 / b[2]);
    } else if (name == "Eckerle4") {
      *f = (b[0] / b[1]) * exp(-0.5 * ((x - b[2]) / b[1]) * ((x - b[2]) / b[1]));
    } else if (name == "MGH09") {
      *f = b[0] * (x * x + x * b[1]) / (x * x + x * b[2] + b[3]);
    } else if (name == "MGH10") {
      *f = b[0] * exp(b[1] / (x + b[2]));
    } else if (name == "Rat42") {
      *f = b[0] / (1.0 + exp(b[1] - b[2] * x));
    } else if (name == "Rat43") {
      *f = b[0] / pow(1.0 + exp(b[1] - b[2] * x), 1.0 / b[3]);
    } else {
      return false;
    }
    return true;
  }
};

double Lre(double estimate, double certified) {
  if (!std::isfinite(estimate)) return 0.0;
  const double error = certified != 0.0 ? std::abs(estimate - certified) / std::abs(certified)
                                        : std::abs(estimate);
  if (error == 0.0) return kMaxLre;
  return std::clamp(-std::log10(error), 0.0, kMaxLre);
}

struct Score {
  bool converged = false;
  std::vector<double> parameter_lre;
  std::vector<double> sd_lre;
  double rss_lre = 0.0;
  double min_lre = 0.0;
  int restarts = 0;
  int iterations = 0;
};

// Lanczos1 is an exact fit (certified RSS 1.4e-25): its certified SDs and
// RSS sit at the level of rounding, so only its parameters are scored.
bool ScoresSdAndRss(const NistProblem& problem) { return problem.name != "Lanczos1"; }

Score Solve(const NistProblem& problem, int start) {
  NistModel model{problem.name, static_cast<int>(problem.certified.size()), problem.x1,
                  problem.x2};
  std::vector<ParameterSpec> specs;
  for (size_t j = 0; j < problem.certified.size(); ++j) {
    ParameterSpec spec;
    static const char* const kNames[] = {"b1", "b2", "b3", "b4", "b5", "b6", "b7", "b8", "b9"};
    spec.name = kNames[j];
    spec.start = problem.starts[start][j];
    specs.push_back(spec);
  }
  GenericFitOptions options;
  // Reference-grade settings: the cost-change test off (1e-16 is below
  // rounding), stop on the step size; polish by Gauss–Newton afterwards;
  // multi-start around NIST's start (each parameter ×0.1 and ×10) and keep
  // the lowest sum of squares.
  options.engine.function_tolerance = 1e-16;
  options.engine.gradient_tolerance = 1e-16;
  options.engine.parameter_tolerance = 1e-14;
  options.engine.max_iterations = 2000;
  options.multi_start = true;
  const GenericFit fit = FitGeneric(model, problem.y, specs, options);
  Score score;
  score.converged = fit.solution.termination == FitTermination::kConvergence;
  score.restarts = fit.restarts;
  score.iterations = fit.solution.iterations;
  for (size_t j = 0; j < problem.certified.size(); ++j) {
    score.parameter_lre.push_back(
        score.converged ? Lre(fit.solution.theta[j], problem.certified[j]) : 0.0);
    score.sd_lre.push_back(score.converged ? Lre(fit.se[j], problem.certified_sd[j]) : 0.0);
  }
  score.rss_lre = score.converged ? Lre(fit.solution.ssr, problem.certified_rss) : 0.0;
  score.min_lre = *std::min_element(score.parameter_lre.begin(), score.parameter_lre.end());
  if (ScoresSdAndRss(problem)) {
    score.min_lre = std::min(
        {score.min_lre, *std::min_element(score.sd_lre.begin(), score.sd_lre.end()),
         score.rss_lre});
  }
  return score;
}

const std::vector<std::pair<std::string, Difficulty>>& Problems() {
  static const std::vector<std::pair<std::string, Difficulty>> problems = {
      {"Chwirut1", Difficulty::kLower},  {"Chwirut2", Difficulty::kLower},
      {"DanWood", Difficulty::kLower},   {"Gauss1", Difficulty::kLower},
      {"Gauss2", Difficulty::kLower},    {"Lanczos3", Difficulty::kLower},
      {"Misra1a", Difficulty::kLower},   {"Misra1b", Difficulty::kLower},
      {"ENSO", Difficulty::kAverage},    {"Gauss3", Difficulty::kAverage},
      {"Hahn1", Difficulty::kAverage},   {"Kirby2", Difficulty::kAverage},
      {"Lanczos1", Difficulty::kAverage}, {"Lanczos2", Difficulty::kAverage},
      {"MGH17", Difficulty::kAverage},   {"Misra1c", Difficulty::kAverage},
      {"Misra1d", Difficulty::kAverage}, {"Nelson", Difficulty::kAverage},
      {"Roszman1", Difficulty::kAverage}, {"Bennett5", Difficulty::kHigher},
      {"BoxBOD", Difficulty::kHigher},   {"Eckerle4", Difficulty::kHigher},
      {"MGH09", Difficulty::kHigher},    {"MGH10", Difficulty::kHigher},
      {"Rat42", Difficulty::kHigher},    {"Rat43", Difficulty::kHigher},
      {"Thurber", Difficulty::kHigher},
  };
  return problems;
}

const char* DifficultyName(Difficulty d) {
  return d == Difficulty::kLower ? "lower" : d == Difficulty::kAverage ? "average" : "higher";
}

// The minimum LRE each higher-difficulty problem reaches today from
// {start 1, start 2}, rounded down (tests/data/nist/LRE.md); a regression
// below it fails the test.
const std::map<std::string, std::pair<double, double>> kHigherDifficultyFloor = {
    {"Bennett5", {9.0, 8.0}},  {"BoxBOD", {10.0, 10.0}}, {"Eckerle4", {10.0, 10.0}},
    {"MGH09", {9.0, 10.0}},    {"MGH10", {7.0, 10.0}},   {"Rat42", {10.0, 10.0}},
    {"Rat43", {10.0, 10.0}},   {"Thurber", {10.0, 10.0}},
};

class NistTest : public ::testing::TestWithParam<std::pair<std::string, Difficulty>> {};

TEST_P(NistTest, ReachesTheRequiredLogRelativeErrorFromBothStarts) {
  const NistProblem problem = Parse(GetParam().first, GetParam().second);
  ASSERT_FALSE(problem.y.empty());
  ASSERT_EQ(problem.certified.size(), problem.starts[0].size());
  for (int start = 0; start < 2; ++start) {
    const Score score = Solve(problem, start);
    double required = start == 1 ? kRequiredLreStart2 : kRequiredLreStart1;
    if (problem.difficulty == Difficulty::kHigher) {
      const auto& floor = kHigherDifficultyFloor.at(problem.name);
      required = start == 0 ? floor.first : floor.second;
    }
    EXPECT_GE(score.min_lre, required)
        << problem.name << " from start " << start + 1 << (score.converged ? "" : " (no convergence)");
  }
}

INSTANTIATE_TEST_SUITE_P(StRD, NistTest, ::testing::ValuesIn(Problems()),
                         [](const auto& param_info) { return param_info.param.first; });

TEST(Nist, ParsesCertifiedValuesOfMisra1a) {
  // Misra1a.dat, lines 41–43 (certified b1, b2 and the residual SS).
  const NistProblem problem = Parse("Misra1a", Difficulty::kLower);
  ASSERT_EQ(problem.certified.size(), 2u);
  EXPECT_EQ(problem.certified[0], 2.3894212918E+02);
  EXPECT_EQ(problem.certified_sd[1], 7.2668688436E-06);
  EXPECT_EQ(problem.starts[0][0], 500.0);
  EXPECT_EQ(problem.starts[1][1], 0.0005);
  EXPECT_EQ(problem.certified_rss, 1.2455138894E-01);
  EXPECT_EQ(problem.y.size(), 14u);
  EXPECT_EQ(problem.x1.front(), 77.6);
}

// The whole table: the minimum per difficulty meets the requirements; the
// table is written when RATEWELL_NIST_LRE_TABLE names a file.
TEST(Nist, MinimumLrePerDifficultyMeetsTheRequirements) {
  std::ostringstream table;
  table << std::fixed << std::setprecision(1);
  table << "# LRE of ratewell's generic engine on the NIST StRD nonlinear problems\n\n"
        << "Written by `tests/fitting/nist_test.cc` (`RATEWELL_NIST_LRE_TABLE=<file> "
           "fitting_tests --gtest_filter='Nist.*'`).\n"
        << "LRE = -log10(|estimate - certified| / |certified|), capped at 11; 0 = no "
           "convergence. Parameters b1..bp, their standard deviations (SD) and the residual "
           "sum of squares (RSS); `min` is the problem's score (Lanczos1: parameters only, "
           "its certified SDs and RSS sit at rounding level). Settings: Ceres "
           "Levenberg-Marquardt, DENSE_QR, function and gradient tolerance 1e-16, parameter "
           "tolerance 1e-14, up to 2000 iterations, then Gauss-Newton polish steps; "
           "multi-start from NIST's start and from it with each parameter x0.1 and x10, "
           "lowest sum of squares kept; up to 4 restarts from the optimum.\n\n";
  std::map<std::string, std::pair<double, double>> minima[3];
  table << "| problem | difficulty | start | min | RSS | parameters | SDs |\n"
        << "|---|---|---|---|---|---|---|\n";
  for (const auto& [name, difficulty] : Problems()) {
    const NistProblem problem = Parse(name, difficulty);
    for (int start = 0; start < 2; ++start) {
      const Score score = Solve(problem, start);
      table << "| " << name << " | " << DifficultyName(difficulty) << " | " << start + 1
            << " | **" << score.min_lre << "** | " << score.rss_lre << " | ";
      for (size_t j = 0; j < score.parameter_lre.size(); ++j) {
        table << (j ? " " : "") << score.parameter_lre[j];
      }
      table << " | ";
      for (size_t j = 0; j < score.sd_lre.size(); ++j) {
        table << (j ? " " : "") << score.sd_lre[j];
      }
      table << " |\n";
      auto& entry = minima[static_cast<int>(difficulty)][name];
      (start == 0 ? entry.first : entry.second) = score.min_lre;
    }
  }
  table << "\n## Minimum LRE per difficulty\n\n| difficulty | start 1 | start 2 |\n|---|---|---|\n";
  for (int d = 0; d < 3; ++d) {
    double min1 = kMaxLre, min2 = kMaxLre;
    for (const auto& [name, m] : minima[d]) {
      min1 = std::min(min1, m.first);
      min2 = std::min(min2, m.second);
    }
    table << "| " << DifficultyName(static_cast<Difficulty>(d)) << " | " << min1 << " | "
          << min2 << " |\n";
  }
  for (int d = 0; d < 2; ++d) {
    for (const auto& [name, m] : minima[d]) {
      EXPECT_GE(m.first, kRequiredLreStart1) << name << " start 1";
      EXPECT_GE(m.second, kRequiredLreStart2) << name << " start 2";
    }
  }
  if (const char* path = std::getenv("RATEWELL_NIST_LRE_TABLE")) {
    std::ofstream out(path);
    out << table.str();
    EXPECT_TRUE(out.good()) << "could not write " << path;
    std::cout << table.str();
  }
}

}  // namespace
}  // namespace ratewell
