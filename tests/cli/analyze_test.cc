// `ratewell analyze` contract: outputs, exit codes, never beside an input.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "cli/commands.h"
#include "tests/cli/run_cli.h"

namespace ratewell::cli {
namespace {

namespace fs = std::filesystem;

using testing::RunCli;
using testing::Outcome;

fs::path CopyExperiment(const std::string& name) {
  const fs::path to = fs::temp_directory_path() / ("ratewell-analyze-test-" + name);
  fs::remove_all(to);
  fs::create_directories(to);
  for (const auto& entry : fs::directory_iterator(testing::DemoFolder() / "mut7-mutase")) {
    fs::copy_file(entry.path(), to / entry.path().filename());
  }
  return to;
}

TEST(Analyze, RefusesAnOutputFolderThatHoldsAnInputAndWritesNothing) {
  const fs::path folder = CopyExperiment("beside");
  const auto before = std::distance(fs::directory_iterator(folder), fs::directory_iterator());
  const Outcome r = RunCli({"analyze", (folder / "mut7_wide.txt").string(), "--layout",
                            (folder / "layout.csv").string(), "--out", folder.string()});
  EXPECT_EQ(r.status, kExitBadInput);
  EXPECT_NE(r.err.find("output folder holds the input file"), std::string::npos) << r.err;
  EXPECT_EQ(std::distance(fs::directory_iterator(folder), fs::directory_iterator()), before);
}

TEST(Analyze, WritesOnlyTheOutputsAskedFor) {
  const fs::path folder = CopyExperiment("outputs");
  const fs::path out = folder / "results-csv-only";
  const Outcome r = RunCli({"analyze", (folder / "mut7_wide.txt").string(), "--layout",
                            (folder / "layout.csv").string(), "--assay", (folder / "ASSAY.json").string(),
                            "--out", out.string(), "--outputs", "csv"});
  ASSERT_EQ(r.status, kExitOk) << r.err;
  EXPECT_TRUE(fs::exists(out / "rates.csv"));
  EXPECT_FALSE(fs::exists(out / "results.json"));
  std::ifstream csv(out / "rates.csv");
  std::string header;
  std::getline(csv, header);
  EXPECT_EQ(header.rfind("plate,well,role,group,substrate_uM,inhibitor_uM,", 0), 0u);
  EXPECT_NE(r.out.find("do not replace"), std::string::npos);
}

TEST(Analyze, RecordsInputsWithTheirHashesAndEverySettingUsed) {
  const fs::path folder = CopyExperiment("json");
  const fs::path out = folder / "results";
  const Outcome r = RunCli({"analyze", (folder / "mut7_wide.txt").string(), "--layout",
                            (folder / "layout.csv").string(), "--out", out.string()});
  ASSERT_EQ(r.status, kExitOk) << r.err;
  std::ifstream in(out / "results.json");
  const nlohmann::json j = nlohmann::json::parse(in);
  EXPECT_EQ(j["software"]["name"], "ratewell");
  ASSERT_EQ(j["inputs"].size(), 2u);
  EXPECT_EQ(j["inputs"][0]["sha256"].get<std::string>().size(), 64u);
  // No ASSAY.json given: the defaults are what was used, and they are written out.
  EXPECT_EQ(j["settings"]["detection"]["epsilon_per_M_cm"], 6220.0);
  EXPECT_EQ(j["settings"]["pathlength"]["mode"], "fixed");
  EXPECT_TRUE(j["fits"].is_array());
}

TEST(Analyze, NamesTheLayoutLineOfABadLayoutWithStatusTwo) {
  const fs::path folder = CopyExperiment("badlayout");
  std::ofstream(folder / "layout.csv") << "well,role,substrate_uM\nA01,sample,10\nA01,sample,20\n";
  const Outcome r = RunCli({"analyze", (folder / "mut7_wide.txt").string(), "--layout",
                            (folder / "layout.csv").string(), "--out", (folder / "o").string()});
  EXPECT_EQ(r.status, kExitBadInput);
  EXPECT_NE(r.err.find("layout.csv:3"), std::string::npos) << r.err;
  EXPECT_FALSE(fs::exists(folder / "o"));
}

}  // namespace
}  // namespace ratewell::cli
