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

TEST(Analyze, FitsTheModelNamedWithTheIntervalMethodAsked) {
  const fs::path folder = CopyExperiment("named-model");
  const fs::path out = folder / "results";
  const Outcome r = RunCli({"analyze", (folder / "mut7_wide.txt").string(), "--layout",
                            (folder / "layout.csv").string(), "--assay",
                            (folder / "ASSAY.json").string(), "--out", out.string(), "--model",
                            "michaelis-menten", "--ci", "asymptotic"});
  ASSERT_LE(r.status, kExitNeedsReview) << r.err;
  std::ifstream in(out / "results.json");
  const nlohmann::json j = nlohmann::json::parse(in);
  ASSERT_EQ(j["fits"].size(), 1u);
  EXPECT_EQ(j["fits"][0]["model"], "michaelis-menten");
  EXPECT_EQ(j["preferred_model"], "michaelis-menten");
  EXPECT_EQ(j["model_choice"]["requested"], "michaelis-menten");
  EXPECT_EQ(j["fits"][0]["parameters"]["Km"]["ci_method"], "asymptotic");
  EXPECT_EQ(j["fits"][0]["parameters"]["Km"]["unit"], "uM");
  EXPECT_EQ(j["fits"][0]["parameters"]["Vmax"]["unit"], "uM/min");
  EXPECT_NE(j["model_choice"]["reason"].get<std::string>().find("named by the user"),
            std::string::npos);
}

TEST(Analyze, WritesATidyParameterTableWithOneRowPerModelAndParameter) {
  const fs::path folder = CopyExperiment("parameters");
  const fs::path out = folder / "results";
  const Outcome r = RunCli({"analyze", (folder / "mut7_wide.txt").string(), "--layout",
                            (folder / "layout.csv").string(), "--assay",
                            (folder / "ASSAY.json").string(), "--out", out.string()});
  ASSERT_LE(r.status, kExitNeedsReview) << r.err;
  std::ifstream csv(out / "parameters.csv");
  std::string line;
  std::getline(csv, line);
  EXPECT_EQ(line.rfind("model,preferred,parameter,kind,group,value,unit,se,ci_lower,ci_upper,", 0), 0u);
  const auto columns = [](const std::string& row) {
    int n = 1;
    bool quoted = false;
    for (char ch : row) {
      if (ch == '"') quoted = !quoted;
      if (ch == ',' && !quoted) ++n;
    }
    return n;
  };
  const int width = columns(line);
  int rows = 0;
  int preferred_km = 0;
  while (std::getline(csv, line)) {
    ++rows;
    EXPECT_EQ(columns(line), width) << line;
    if (line.rfind("substrate-inhibition,true,Km,fitted,", 0) == 0) ++preferred_km;
  }
  // Three candidates: michaelis-menten (2 + derived), substrate-inhibition
  // (3 + derived), hill (3 + derived).
  EXPECT_GE(rows, 8);
  EXPECT_EQ(preferred_km, 1);
  EXPECT_NE(r.out.find("substrate-inhibition preferred"), std::string::npos) << r.out;
}

TEST(Analyze, FitsReplicatePlatesOfOneExperimentTogether) {
  // The lot-release plate exported twice (CSV and .xlsx): two plates of one
  // design, every sample well a point of one fit.
  const fs::path demo = testing::DemoFolder() / "kn2-lot-release";
  const fs::path out = fs::temp_directory_path() / "ratewell-analyze-test-two-plates";
  fs::remove_all(out);
  const Outcome r = RunCli({"analyze", (demo / "kn2-2611a_long.csv").string(),
                            (demo / "kn2-2611a_long.xlsx").string(), "--layout",
                            (demo / "layout.csv").string(), "--assay",
                            (demo / "ASSAY.json").string(), "--out", out.string(), "--outputs",
                            "json", "--ci", "asymptotic"});
  ASSERT_LE(r.status, kExitNeedsReview) << r.err;
  std::ifstream in(out / "results.json");
  const nlohmann::json j = nlohmann::json::parse(in);
  int plates = 0;
  for (const auto& input : j["inputs"]) {
    if (input["kind"] == "plate") ++plates;
  }
  EXPECT_EQ(plates, 2);
  int used = 0;
  for (const auto& w : j["wells"]) {
    if (w["kinetic_use"].get<bool>()) ++used;
  }
  // 24 sample wells with a rate on each plate (D01 saturates on both).
  EXPECT_EQ(used, 48);
  EXPECT_EQ(j["model_choice"]["points"], 48);
  for (const auto& fit : j["fits"]) EXPECT_EQ(fit["n"], 48);
  fs::remove_all(out);
}

TEST(Analyze, RejectsAnUnknownModelOrIntervalMethodWithStatusTwo) {
  const fs::path folder = CopyExperiment("bad-model");
  Outcome r = RunCli({"analyze", (folder / "mut7_wide.txt").string(), "--layout",
                      (folder / "layout.csv").string(), "--out", (folder / "o").string(),
                      "--model", "michaelis"});
  EXPECT_EQ(r.status, kExitBadInput);
  EXPECT_NE(r.err.find("unknown model 'michaelis'"), std::string::npos) << r.err;
  EXPECT_NE(r.err.find("michaelis-menten"), std::string::npos) << r.err;
  r = RunCli({"analyze", (folder / "mut7_wide.txt").string(), "--layout",
              (folder / "layout.csv").string(), "--out", (folder / "o").string(), "--ci", "wald"});
  EXPECT_EQ(r.status, kExitBadInput);
  EXPECT_NE(r.err.find("asymptotic, profile or bootstrap"), std::string::npos) << r.err;
  EXPECT_FALSE(fs::exists(folder / "o"));
}

}  // namespace
}  // namespace ratewell::cli
