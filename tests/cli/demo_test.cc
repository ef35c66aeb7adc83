// The bundled demo: `ratewell analyze` on each demo experiment recovers the
// initial rates the simulator put in (demo-plates/*/truth.json).
#include <gtest/gtest.h>

#include <cctype>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "cli/commands.h"
#include "tests/cli/run_cli.h"

namespace ratewell::cli {
namespace {

namespace fs = std::filesystem;


nlohmann::json ReadJson(const fs::path& path) {
  std::ifstream in(path);
  return nlohmann::json::parse(in);
}

struct DemoCase {
  std::string experiment;
  std::string plate_file;
};

void PrintTo(const DemoCase& c, std::ostream* os) { *os << c.experiment << "/" << c.plate_file; }

class DemoAnalysis : public ::testing::TestWithParam<DemoCase> {};

TEST_P(DemoAnalysis, RecoversTheSimulatedInitialRates) {
  const DemoCase& c = GetParam();
  const fs::path folder = testing::DemoFolder() / c.experiment;
  const fs::path out = fs::temp_directory_path() / ("ratewell-demo-test-" + c.experiment);
  fs::remove_all(out);
  const testing::Outcome r = testing::RunCli(
      {"analyze", (folder / c.plate_file).string(), "--layout", (folder / "layout.csv").string(),
       "--assay", (folder / "ASSAY.json").string(), "--out", out.string()});
  const int status = r.status;
  ASSERT_LE(status, kExitNeedsReview) << r.err;

  const nlohmann::json results = ReadJson(out / "results.json");
  const nlohmann::json truth = ReadJson(folder / "truth.json");
  EXPECT_EQ(results["schema"], 1);
  std::map<std::string, double> true_rate;
  for (const auto& w : truth["wells"]) {
    if (w["role"] == "sample" && !w["rate_uM_per_min"].is_null() && !w["saturating"].get<bool>()) {
      true_rate[w["well"]] = w["rate_uM_per_min"];
    }
  }
  int checked = 0;
  int covered = 0;
  for (const auto& w : results["wells"]) {
    const auto it = true_rate.find(w["well"].get<std::string>());
    if (it == true_rate.end()) continue;
    ASSERT_FALSE(w["rate"].is_null()) << w["well"];
    const double lo = w["rate"]["ci95"][0];
    const double hi = w["rate"]["ci95"][1];
    ++checked;
    if (lo <= it->second && it->second <= hi) ++covered;
  }
  EXPECT_EQ(checked, static_cast<int>(true_rate.size()));
  // 95 % intervals: over 24-90 wells at least 85 % should cover the truth
  // (a binomial lower tail well below 1e-3 for a true 95 % coverage).
  EXPECT_GE(covered, checked * 85 / 100) << covered << " of " << checked;
  EXPECT_TRUE(fs::exists(out / "rates.csv"));
}

INSTANTIATE_TEST_SUITE_P(
    Demo, DemoAnalysis,
    ::testing::Values(DemoCase{"kn2-lot-release", "kn2-2611a_long.xlsx"},
                      DemoCase{"kn2-lot-release", "kn2-2611a_long.csv"},
                      DemoCase{"cbx-inhibitor-series", "cbx214_grid.csv"},
                      DemoCase{"mut7-mutase", "mut7_wide.txt"}),
    [](const ::testing::TestParamInfo<DemoCase>& info) {
      std::string name = info.param.plate_file;
      for (char& ch : name) {
        if (!std::isalnum(static_cast<unsigned char>(ch))) ch = '_';
      }
      return name;
    });

}  // namespace
}  // namespace ratewell::cli
