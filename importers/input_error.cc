#include "importers/input_error.h"

#include <algorithm>
#include <cctype>
#include <vector>

namespace ratewell {
namespace {

std::string FormatMessage(const std::string& file, int line, int column,
                          const std::string& reason) {
  std::string message = file.empty() ? std::string("<input>") : file;
  if (line > 0) {
    message.append(":").append(std::to_string(line));
    if (column > 0) message.append(":").append(std::to_string(column));
  }
  message.append(": ").append(reason);
  return message;
}

}  // namespace

InputError::InputError(std::string file, int line, int column, std::string reason)
    : std::runtime_error(FormatMessage(file, line, column, reason)),
      file_(std::move(file)),
      line_(line),
      column_(column),
      reason_(std::move(reason)) {}

int EditDistanceIgnoreCase(std::string_view a, std::string_view b) {
  std::vector<int> previous(b.size() + 1);
  std::vector<int> current(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) previous[j] = static_cast<int>(j);
  for (std::size_t i = 1; i <= a.size(); ++i) {
    current[0] = static_cast<int>(i);
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const bool same = std::tolower(static_cast<unsigned char>(a[i - 1])) ==
                        std::tolower(static_cast<unsigned char>(b[j - 1]));
      current[j] = std::min({previous[j] + 1, current[j - 1] + 1, previous[j - 1] + (same ? 0 : 1)});
    }
    std::swap(previous, current);
  }
  return previous[b.size()];
}

}  // namespace ratewell
