#include "importers/json_position.h"

#include <algorithm>
#include <cctype>
#include <optional>

namespace ratewell {
namespace {

// A forward walk over JSON text that is known to be valid. Every method
// returns false on text it does not expect, so bad text ends the walk
// without reading past the end.
class JsonWalker {
 public:
  explicit JsonWalker(std::string_view text) : text_(text) {}

  // Moves to the value at path[depth…] from the value starting at pos_;
  // best_ follows the deepest value reached.
  bool Find(const std::vector<std::string>& path, std::size_t depth) {
    SkipSpace();
    best_ = pos_;
    if (depth == path.size()) return true;
    if (pos_ >= text_.size()) return false;
    if (text_[pos_] == '{') {
      ++pos_;
      SkipSpace();
      if (Peek('}')) return false;
      while (true) {
        std::string key;
        if (!ReadString(&key)) return false;
        SkipSpace();
        if (!Expect(':')) return false;
        SkipSpace();
        if (key == path[depth]) return Find(path, depth + 1);
        if (!SkipValue()) return false;
        SkipSpace();
        if (Peek(',')) {
          ++pos_;
          SkipSpace();
          continue;
        }
        return false;  // '}' : key not present
      }
    }
    if (text_[pos_] == '[') {
      std::size_t wanted = 0;
      try {
        wanted = std::stoul(path[depth]);
      } catch (...) {
        return false;
      }
      ++pos_;
      SkipSpace();
      if (Peek(']')) return false;
      for (std::size_t index = 0;; ++index) {
        if (index == wanted) return Find(path, depth + 1);
        if (!SkipValue()) return false;
        SkipSpace();
        if (!Peek(',')) return false;
        ++pos_;
        SkipSpace();
      }
    }
    return false;
  }

  std::size_t best() const { return best_; }

 private:
  bool Peek(char c) const { return pos_ < text_.size() && text_[pos_] == c; }
  bool Expect(char c) {
    if (!Peek(c)) return false;
    ++pos_;
    return true;
  }
  void SkipSpace() {
    while (pos_ < text_.size() && std::isspace(static_cast<unsigned char>(text_[pos_]))) ++pos_;
  }
  // Reads a string token, escapes kept as written (keys of our schema are
  // plain ASCII).
  bool ReadString(std::string* out) {
    if (!Expect('"')) return false;
    while (pos_ < text_.size() && text_[pos_] != '"') {
      if (text_[pos_] == '\\') {
        if (out) out->push_back(text_[pos_]);
        ++pos_;
        if (pos_ >= text_.size()) return false;
      }
      if (out) out->push_back(text_[pos_]);
      ++pos_;
    }
    return Expect('"');
  }
  bool SkipValue() {
    SkipSpace();
    if (pos_ >= text_.size()) return false;
    const char c = text_[pos_];
    if (c == '"') return ReadString(nullptr);
    if (c == '{' || c == '[') {
      const char close = c == '{' ? '}' : ']';
      ++pos_;
      SkipSpace();
      if (Expect(close)) return true;
      while (true) {
        if (c == '{') {
          if (!ReadString(nullptr)) return false;
          SkipSpace();
          if (!Expect(':')) return false;
        }
        if (!SkipValue()) return false;
        SkipSpace();
        if (Expect(close)) return true;
        if (!Expect(',')) return false;
        SkipSpace();
      }
    }
    // number, true, false, null
    const std::size_t start = pos_;
    while (pos_ < text_.size() && (std::isalnum(static_cast<unsigned char>(text_[pos_])) ||
                                   text_[pos_] == '-' || text_[pos_] == '+' || text_[pos_] == '.')) {
      ++pos_;
    }
    return pos_ > start;
  }

  std::string_view text_;
  std::size_t pos_ = 0;
  std::size_t best_ = 0;
};

}  // namespace

TextPosition PositionOfOffset(std::string_view text, std::size_t offset) {
  offset = std::min(offset, text.size());
  TextPosition position{1, 1};
  for (std::size_t i = 0; i < offset; ++i) {
    const unsigned char c = static_cast<unsigned char>(text[i]);
    if (c == '\n') {
      ++position.line;
      position.column = 1;
    } else if ((c & 0xC0) != 0x80) {  // not a UTF-8 continuation byte
      ++position.column;
    }
  }
  return position;
}

TextPosition LocateJsonValue(std::string_view text, const std::vector<std::string>& path) {
  std::size_t start = 0;
  // Skip a UTF-8 byte order mark.
  if (text.substr(0, 3) == "\xEF\xBB\xBF") start = 3;
  JsonWalker walker(text.substr(start));
  walker.Find(path, 0);
  return PositionOfOffset(text.substr(start), walker.best());
}

}  // namespace ratewell
