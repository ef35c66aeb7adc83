#include "simulate/detail/located_json.h"

#include <algorithm>
#include <cctype>
#include <set>
#include <vector>

#include "importers/input_error.h"

namespace ratewell::detail {
namespace {

// Maps byte offsets to (line, column).
class LineIndex {
 public:
  explicit LineIndex(std::string_view text) : text_(text) {
    starts_.push_back(0);
    for (std::size_t i = 0; i < text.size(); ++i) {
      if (text[i] == '\n') starts_.push_back(i + 1);
    }
  }

  TextPosition At(std::size_t offset) const {
    offset = std::min(offset, text_.size());
    const auto it = std::upper_bound(starts_.begin(), starts_.end(), offset);
    const std::size_t line = static_cast<std::size_t>(it - starts_.begin());  // 1-based
    const std::size_t start = starts_[line - 1];
    int column = 1;
    for (std::size_t i = start; i < offset; ++i) {
      if ((static_cast<unsigned char>(text_[i]) & 0xC0) != 0x80) ++column;
    }
    return {static_cast<int>(line), column};
  }

 private:
  std::string_view text_;
  std::vector<std::size_t> starts_;
};

// Start of the token that ends at byte `end` (one past its last byte): a
// string literal back to its opening quote, a number or word back over its
// characters, anything else is one byte.
std::size_t TokenStart(std::string_view text, std::size_t end) {
  if (end == 0) return 0;
  std::size_t last = std::min(end, text.size()) - 1;
  if (last >= text.size()) return 0;
  const auto is_word = [](char c) {
    return std::isalnum(static_cast<unsigned char>(c)) || c == '.' || c == '+' || c == '-';
  };
  if (text[last] == '"') {
    for (std::size_t i = last; i-- > 0;) {
      if (text[i] != '"') continue;
      std::size_t backslashes = 0;
      while (backslashes < i && text[i - 1 - backslashes] == '\\') ++backslashes;
      if (backslashes % 2 == 0) return i;
    }
    return last;
  }
  if (is_word(text[last])) {
    while (last > 0 && is_word(text[last - 1])) --last;
  }
  return last;
}

bool IsJsonSpace(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }

// Walks text already accepted by the parser, recording positions.
class Walker {
 public:
  Walker(std::string_view text, const std::string& file, LocatedJson* out)
      : text_(text), file_(file), lines_(text), out_(out) {}

  void Run() {
    std::size_t at = SkipSpace(0);
    // A UTF-8 byte order mark is accepted by the parser; step over it.
    if (text_.substr(at, 3) == "\xEF\xBB\xBF") at = SkipSpace(at + 3);
    out_->positions[""] = lines_.At(at);
    Value(at, "");
  }

 private:
  std::size_t SkipSpace(std::size_t at) const {
    while (at < text_.size() && IsJsonSpace(text_[at])) ++at;
    return at;
  }

  // Offset one past the string starting at the quote at `at`.
  std::size_t StringEnd(std::size_t at) const {
    ++at;
    while (at < text_.size() && text_[at] != '"') {
      at += (text_[at] == '\\') ? 2 : 1;
    }
    return at + 1;
  }

  // Returns the offset one past the value starting at `at`.
  std::size_t Value(std::size_t at, const std::string& pointer) {
    at = SkipSpace(at);
    if (at >= text_.size()) return at;
    const char c = text_[at];
    if (c == '{') return Object(at, pointer);
    if (c == '[') return Array(at, pointer);
    if (c == '"') return StringEnd(at);
    while (at < text_.size() && !IsJsonSpace(text_[at]) && text_[at] != ',' && text_[at] != ']' &&
           text_[at] != '}') {
      ++at;
    }
    return at;
  }

  std::size_t Object(std::size_t at, const std::string& pointer) {
    std::set<std::string> seen;
    at = SkipSpace(at + 1);
    if (at < text_.size() && text_[at] == '}') return at + 1;
    while (at < text_.size()) {
      const std::size_t key_start = at;
      const std::size_t key_end = StringEnd(at);
      const std::string key =
          nlohmann::json::parse(text_.substr(key_start, key_end - key_start)).get<std::string>();
      const std::string child = AppendPointer(pointer, key);
      const TextPosition where = lines_.At(key_start);
      if (!seen.insert(key).second) {
        throw InputError(file_, where.line, where.column,
                         "key \"" + key + "\" is written twice in the same object; give it once");
      }
      out_->positions[child] = where;
      at = SkipSpace(key_end);
      at = SkipSpace(at + 1);  // ':'
      at = SkipSpace(Value(at, child));
      if (at < text_.size() && text_[at] == ',') {
        at = SkipSpace(at + 1);
        continue;
      }
      return at + 1;  // '}'
    }
    return at;
  }

  std::size_t Array(std::size_t at, const std::string& pointer) {
    at = SkipSpace(at + 1);
    if (at < text_.size() && text_[at] == ']') return at + 1;
    int index = 0;
    while (at < text_.size()) {
      const std::string child = AppendPointer(pointer, std::to_string(index++));
      out_->positions[child] = lines_.At(at);
      at = SkipSpace(Value(at, child));
      if (at < text_.size() && text_[at] == ',') {
        at = SkipSpace(at + 1);
        continue;
      }
      return at + 1;  // ']'
    }
    return at;
  }

  std::string_view text_;
  const std::string& file_;
  LineIndex lines_;
  LocatedJson* out_;
};

}  // namespace

std::string AppendPointer(const std::string& pointer, std::string_view token) {
  std::string result = pointer;
  result += '/';
  for (char c : token) {
    if (c == '~') {
      result += "~0";
    } else if (c == '/') {
      result += "~1";
    } else {
      result += c;
    }
  }
  return result;
}

TextPosition LocatedJson::Locate(const std::string& pointer) const {
  std::string p = pointer;
  while (true) {
    const auto it = positions.find(p);
    if (it != positions.end()) return it->second;
    if (p.empty()) return {};
    p.erase(p.rfind('/'));
  }
}

LocatedJson ParseLocatedJson(std::string_view text, const std::string& file) {
  LocatedJson result;
  try {
    result.value = nlohmann::json::parse(text.begin(), text.end());
  } catch (const nlohmann::json::parse_error& error) {
    // error.byte counts the bytes read, the offending token included; point
    // at the start of that token.
    const TextPosition at = LineIndex(text).At(TokenStart(text, error.byte));
    std::string what = error.what();
    const std::size_t detail = what.find("syntax error");
    if (detail != std::string::npos) what = what.substr(detail);
    throw InputError(file, at.line, at.column, "not valid JSON: " + what);
  } catch (const nlohmann::json::exception& error) {
    // A number too large for a double ("1e999") is reported without a
    // position; the message quotes the number, so look for it.
    const std::string what = error.what();
    const std::size_t open = what.find('\'');
    const std::size_t close = open == std::string::npos ? open : what.find('\'', open + 1);
    TextPosition at;
    if (close != std::string::npos && close > open + 1) {
      const std::size_t found = text.find(what.substr(open + 1, close - open - 1));
      if (found != std::string_view::npos) at = LineIndex(text).At(found);
    }
    throw InputError(file, at.line, at.column,
                     "not valid JSON: a number too large for a double (beyond ±1.8e308)");
  }
  Walker(text, file, &result).Run();
  return result;
}

}  // namespace ratewell::detail
