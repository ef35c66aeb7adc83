#include "importers/input_error.h"

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

}  // namespace ratewell
