// InputError: the one exception type for bad input files.
//
// Every reader in importers/ (plate files, layouts) and the settings parser in
// fitting/ throws InputError when a file cannot be used. It carries the file,
// the 1-based line (0 when the problem is the file as a whole) and column (0
// when not known), and a reason that says what was expected. what() returns
// the whole message as "file:line:column: reason", the form compilers use, so
// a person can jump to the spot.
#pragma once

#include <stdexcept>
#include <string>
#include <string_view>

namespace ratewell {

class InputError : public std::runtime_error {
 public:
  InputError(std::string file, int line, int column, std::string reason);

  const std::string& file() const { return file_; }
  int line() const { return line_; }
  int column() const { return column_; }
  const std::string& reason() const { return reason_; }

 private:
  std::string file_;
  int line_;
  int column_;
  std::string reason_;
};

// Levenshtein distance ignoring ASCII case, for "did you mean" hints when a
// file misspells a key.
int EditDistanceIgnoreCase(std::string_view a, std::string_view b);

}  // namespace ratewell
