// The words of an enum, typed once: a table of (value, word) pairs per enum
// gives its to_string, its ..._from_string with the one message "'x' is not
// one of a, b or c" (an InputError naming where), and the word list that
// --help and the experiment-key table show.
//
//   constexpr EnumWord<Colour> kColourWords[] = {{Colour::red, "red"}, {Colour::blue, "blue"}};
//   std::string to_string(Colour c) { return word_of(c, kColourWords); }
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "allocsim/core/error.hpp"

namespace allocsim {

template <class Enum>
struct EnumWord {
  Enum value;
  const char* word;
};

// The word of `value`; "unknown" for a value the table lacks.
template <class Enum, std::size_t N>
std::string word_of(Enum value, const EnumWord<Enum> (&words)[N]) {
  for (const auto& entry : words)
    if (entry.value == value) return entry.word;
  return "unknown";
}

// Every word in table order.
template <class Enum, std::size_t N>
std::vector<std::string> words_of(const EnumWord<Enum> (&words)[N]) {
  std::vector<std::string> list;
  for (const auto& entry : words) list.emplace_back(entry.word);
  return list;
}

// "a, b, c" (or with another separator).
inline std::string join_words(const std::vector<std::string>& words, const char* separator = ", ") {
  std::string text;
  for (const auto& word : words) text += (text.empty() ? "" : separator) + word;
  return text;
}

// "a, b or c", for messages.
inline std::string alternatives(const std::vector<std::string>& words) {
  if (words.size() < 2) return join_words(words);
  const std::vector<std::string> head(words.begin(), words.end() - 1);
  return join_words(head) + " or " + words.back();
}

// The value whose word is `text`; InputError(where, "'text' is not one of a, b or c") otherwise.
template <class Enum, std::size_t N>
Enum value_of(const std::string& text, const EnumWord<Enum> (&words)[N], const std::string& where) {
  for (const auto& entry : words)
    if (text == entry.word) return entry.value;
  throw InputError(where, "'" + text + "' is not one of " + alternatives(words_of(words)));
}

}  // namespace allocsim
