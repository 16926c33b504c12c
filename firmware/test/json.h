// A small JSON reader for the host tests: enough for shared/link/test-vectors.json (objects,
// arrays, strings with simple escapes, numbers, true/false/null). Host-only, so it may use the
// standard library; the firmware never sees it. Written here rather than fetched: the tests
// need no download.
#pragma once

#include <cstdlib>
#include <map>
#include <memory>
#include <stdexcept>
#include <string>
#include <vector>

namespace json {

struct Value {
  enum Kind { Null, Bool, Number, String, Array, Object } kind = Null;
  bool boolean = false;
  double number = 0;
  std::string string;
  std::vector<Value> array;
  std::map<std::string, Value> object;

  bool has(const std::string& key) const { return kind == Object && object.count(key) != 0; }
  const Value& operator[](const std::string& key) const {
    auto it = object.find(key);
    if (kind != Object || it == object.end()) throw std::runtime_error("missing key " + key);
    return it->second;
  }
  const Value& operator[](size_t index) const { return array.at(index); }
  size_t size() const { return kind == Array ? array.size() : object.size(); }
  bool isNull() const { return kind == Null; }
};

class Parser {
 public:
  explicit Parser(const std::string& text) : s_(text) {}
  Value parse() {
    Value v = value();
    space();
    if (at_ != s_.size()) fail("trailing characters");
    return v;
  }

 private:
  const std::string& s_;
  size_t at_ = 0;

  [[noreturn]] void fail(const char* what) { throw std::runtime_error(std::string("JSON: ") + what + " at " + std::to_string(at_)); }
  void space() {
    while (at_ < s_.size() && (s_[at_] == ' ' || s_[at_] == '\n' || s_[at_] == '\r' || s_[at_] == '\t')) at_++;
  }
  bool literal(const char* word) {
    size_t n = std::char_traits<char>::length(word);
    if (s_.compare(at_, n, word) == 0) {
      at_ += n;
      return true;
    }
    return false;
  }
  Value value() {
    space();
    if (at_ >= s_.size()) fail("unexpected end");
    Value v;
    char c = s_[at_];
    if (c == '{') {
      v.kind = Value::Object;
      at_++;
      space();
      if (s_[at_] == '}') {
        at_++;
        return v;
      }
      for (;;) {
        space();
        std::string key = string();
        space();
        if (s_[at_++] != ':') fail("expected :");
        v.object[key] = value();
        space();
        if (s_[at_] == ',') {
          at_++;
          continue;
        }
        if (s_[at_++] != '}') fail("expected }");
        return v;
      }
    }
    if (c == '[') {
      v.kind = Value::Array;
      at_++;
      space();
      if (s_[at_] == ']') {
        at_++;
        return v;
      }
      for (;;) {
        v.array.push_back(value());
        space();
        if (s_[at_] == ',') {
          at_++;
          continue;
        }
        if (s_[at_++] != ']') fail("expected ]");
        return v;
      }
    }
    if (c == '"') {
      v.kind = Value::String;
      v.string = string();
      return v;
    }
    if (literal("true")) {
      v.kind = Value::Bool;
      v.boolean = true;
      return v;
    }
    if (literal("false")) {
      v.kind = Value::Bool;
      return v;
    }
    if (literal("null")) return v;
    char* end = nullptr;
    v.number = std::strtod(s_.c_str() + at_, &end);
    if (end == s_.c_str() + at_) fail("bad value");
    at_ = end - s_.c_str();
    v.kind = Value::Number;
    return v;
  }
  std::string string() {
    if (s_[at_++] != '"') fail("expected string");
    std::string out;
    while (at_ < s_.size() && s_[at_] != '"') {
      char c = s_[at_++];
      if (c != '\\') {
        out += c;
        continue;
      }
      char e = s_[at_++];
      switch (e) {
        case 'n': out += '\n'; break;
        case 't': out += '\t'; break;
        case 'r': out += '\r'; break;
        case 'b': out += '\b'; break;
        case 'f': out += '\f'; break;
        case 'u': {
          unsigned code = std::stoul(s_.substr(at_, 4), nullptr, 16);
          at_ += 4;
          if (code < 0x80) {
            out += (char)code;
          } else if (code < 0x800) {
            out += (char)(0xc0 | (code >> 6));
            out += (char)(0x80 | (code & 0x3f));
          } else {
            out += (char)(0xe0 | (code >> 12));
            out += (char)(0x80 | ((code >> 6) & 0x3f));
            out += (char)(0x80 | (code & 0x3f));
          }
          break;
        }
        default: out += e;
      }
    }
    if (at_ >= s_.size()) fail("unterminated string");
    at_++;
    return out;
  }
};

inline Value parse(const std::string& text) { return Parser(text).parse(); }

}  // namespace json
