// Where a value sits in JSON text, for error messages that name a line and
// column (the assay settings, the saved analysis). nlohmann::json keeps no positions once parsed, so the text is
// walked again along the path of keys and array indices.
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace ratewell {

struct TextPosition {
  int line = 0;    // 1-based; 0 when unknown
  int column = 0;  // 1-based, in characters (UTF-8 aware); 0 when unknown
};

// Line and column of a byte offset (clamped to the text).
TextPosition PositionOfOffset(std::string_view text, std::size_t offset);

// Position of the value at `path` (object keys, and array indices written in
// decimal) in syntactically valid JSON text. When the path does not exist
// (a key is missing), the position of the deepest value on it that does —
// the object that lacks the key. {0, 0} when the text is not valid JSON.
TextPosition LocateJsonValue(std::string_view text, const std::vector<std::string>& path);

}  // namespace ratewell
