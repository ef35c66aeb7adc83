// `ratewell inspect`: what a person (or a script with --json) learns about a file.
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

using testing::Outcome;
using testing::RunCli;

std::string DataFile(const std::string& name) {
  return std::string(RATEWELL_TEST_DATA_DIR) + "/" + name;
}

TEST(Inspect, PrintsTheDetectedFormatAsJson) {
  const Outcome r = RunCli({"inspect", DataFile("plates/long_decimal_comma.csv"), "--json"});
  ASSERT_EQ(r.status, kExitOk) << r.err;
  const nlohmann::json j = nlohmann::json::parse(r.out);
  EXPECT_EQ(j["format"], "long");
  EXPECT_EQ(j["delimiter"], "semicolon");
  EXPECT_EQ(j["decimal_comma"], true);
  EXPECT_EQ(j["plate"]["wells"], 96);
  EXPECT_EQ(j["wavelengths_nm"], nlohmann::json::array({340.0, 900.0, 977.0}));
  // Several wavelengths: reads count time points, not points x wavelengths.
  EXPECT_EQ(j["reads"], 2);
  for (const char* key : {"encoding", "wells_with_data", "time_span_min", "temperature_C",
                          "saturated_points", "missing_points", "warnings"}) {
    EXPECT_TRUE(j.contains(key)) << key;
  }
}

TEST(Inspect, PrintsReadableTextByDefault) {
  const Outcome r = RunCli({"inspect", DataFile("plates/grid_cycles.csv")});
  ASSERT_EQ(r.status, kExitOk) << r.err;
  EXPECT_NE(r.out.find("grid"), std::string::npos);
  EXPECT_NE(r.out.find("96 wells"), std::string::npos);
  EXPECT_NE(r.out.find("saturated points  1"), std::string::npos);
}

TEST(Inspect, ExitsWithStatusTwoAndNamesTheFileAndLineOfBadInput) {
  const fs::path bad = fs::temp_directory_path() / "ratewell-cli-bad.csv";
  std::ofstream(bad) << "Well,Time (s),A340\nA01,0,0.9\nA01,30,banana\n";
  const Outcome r = RunCli({"inspect", bad.string()});
  EXPECT_EQ(r.status, kExitBadInput);
  EXPECT_NE(r.err.find(bad.string() + ":3"), std::string::npos) << r.err;
}

TEST(Inspect, ExitsWithStatusTwoForAMissingFileOrUnknownOption) {
  EXPECT_EQ(RunCli({"inspect", "/nonexistent/plate.csv"}).status, kExitBadInput);
  EXPECT_EQ(RunCli({"inspect", DataFile("plates/grid_cycles.csv"), "--table", "diagonal"}).status,
            kExitBadInput);
  EXPECT_EQ(RunCli(std::vector<std::string>{}).status, kExitBadInput);
}

TEST(Inspect, HonoursAnExplicitTableLayout) {
  const Outcome r = RunCli({"inspect", DataFile("plates/long_by_time.csv"), "--table", "grid", "--json"});
  EXPECT_EQ(r.status, kExitBadInput) << r.out;
}

}  // namespace
}  // namespace ratewell::cli
