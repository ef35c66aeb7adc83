// Runs the `ratewell` command line in-process for the CLI tests.
#pragma once

#include <filesystem>
#include <sstream>
#include <string>
#include <vector>

#include "cli/commands.h"

namespace ratewell::cli::testing {

struct Outcome {
  int status;
  std::string out;
  std::string err;
};

// args without the program name.
inline Outcome RunCli(const std::vector<std::string>& args) {
  std::vector<const char*> argv = {"ratewell"};
  for (const std::string& a : args) argv.push_back(a.c_str());
  std::ostringstream out;
  std::ostringstream err;
  const int status = Run(static_cast<int>(argv.size()), argv.data(), out, err);
  return {status, out.str(), err.str()};
}

// The bundled demo-plates/ folder of the source tree.
inline std::filesystem::path DemoFolder() {
  return std::filesystem::path(RATEWELL_TEST_DATA_DIR).parent_path().parent_path() / "demo-plates";
}

}  // namespace ratewell::cli::testing
