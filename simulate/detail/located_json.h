// Internal: JSON text parsed together with where each key and element is written.
//
// nlohmann::json parses and checks the syntax; a second, light walk over the
// (now known to be valid) text records the 1-based line and column of every
// object key and array element, keyed by its JSON pointer ("/kinetics/km_uM",
// "/files/2"). A reader of a settings-like file can then say exactly where a
// bad value sits. Keys written twice in one object are rejected (the parser
// would keep the last one silently).
#pragma once

#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>

namespace ratewell::detail {

struct TextPosition {
  int line = 0;    // 1-based; 0 = unknown
  int column = 0;  // 1-based, in characters (UTF-8 aware); 0 = unknown
};

struct LocatedJson {
  nlohmann::json value;
  // JSON pointer -> where the key (object member) or the value (array
  // element, root "") starts.
  std::map<std::string, TextPosition> positions;

  // Position of pointer, or of its nearest written ancestor; {0, 0} if none.
  TextPosition Locate(const std::string& pointer) const;
};

// Parses text. Throws InputError(file, line, column, reason) for text that is
// not JSON, naming the spot the parser stopped at, and for a key written twice
// in one object (at the second one).
LocatedJson ParseLocatedJson(std::string_view text, const std::string& file);

// Appends one reference token to a JSON pointer, escaping '~' and '/'.
std::string AppendPointer(const std::string& pointer, std::string_view token);

}  // namespace ratewell::detail
