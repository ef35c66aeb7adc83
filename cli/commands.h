// The `ratewell` command line: subcommands and their exit codes.
//
// Exit status (DESIGN §4): 0 done; 1 the analysis ran and wrote its outputs
// but something needs a person (a failed fit, a failing verdict); 2 bad input
// or usage, with a message naming the file, line and what was expected.
#pragma once

#include <iosfwd>

namespace ratewell::cli {

inline constexpr int kExitOk = 0;
inline constexpr int kExitNeedsReview = 1;
inline constexpr int kExitBadInput = 2;

// Runs the command line; output to out, messages to err. Never throws.
int Run(int argc, const char* const* argv, std::ostream& out, std::ostream& err);
// Run() on std::cout / std::cerr.
int Main(int argc, char** argv);

}  // namespace ratewell::cli
