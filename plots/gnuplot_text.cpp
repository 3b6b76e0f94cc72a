// Escaping plain text for gnuplot, and the figure options.
#include <cstring>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/plots/figures.hpp"

namespace allocsim::plots {

std::string escape_gnuplot_text(const std::string& text) {
  std::string out;
  out.reserve(text.size() + 8);
  for (const char c : text) {
    const auto byte = static_cast<unsigned char>(c);
    if (c == '\'') {
      out += "''";
    } else if (byte < 0x20 || byte == 0x7f) {
      out += ' ';  // a newline would end the command; other controls have no glyph
    } else if (c == '\\' || std::strchr("^_@&~{}", c) != nullptr) {
      out += '\\';
      out += c;
    } else {
      out += c;
    }
  }
  // gnuplot's lexer reads a string that starts with '' as the empty string
  // '' followed by stray text; a zero-width enhanced-text space keeps the
  // doubled quote inside.
  if (out.rfind("''", 0) == 0) out = "&{}" + out;
  return out;
}

std::string quote_gnuplot_text(const std::string& text) {
  return "'" + escape_gnuplot_text(text) + "'";
}

std::string quote_gnuplot_tic_label(const std::string& text) {
  std::string doubled;
  for (const char c : text) {
    doubled += c;
    if (c == '%') doubled += '%';
  }
  return quote_gnuplot_text(doubled);
}

constexpr EnumWord<ImageFormat> kImageFormatWords[] = {
    {ImageFormat::png, "png"}, {ImageFormat::svg, "svg"}, {ImageFormat::pdf, "pdf"}};

std::string to_string(ImageFormat value) { return word_of(value, kImageFormatWords); }

ImageFormat image_format_from_string(const std::string& text) {
  return value_of(text, kImageFormatWords, "--format");
}

std::vector<std::string> image_format_words() { return words_of(kImageFormatWords); }

std::string file_extension(ImageFormat format) { return to_string(format); }

void FigureOptions::validate() const {
  if (width_pixels < 0 || (width_pixels > 0 && (width_pixels < 200 || width_pixels > 10000))) {
    throw InputError("width_pixels",
                     "must be 0 (default) or in [200, 10000], not " + std::to_string(width_pixels));
  }
  if (height_pixels < 0 || (height_pixels > 0 && (height_pixels < 200 || height_pixels > 10000))) {
    throw InputError("height_pixels", "must be 0 (default) or in [200, 10000], not " +
                                          std::to_string(height_pixels));
  }
  if (font_size_points < 6 || font_size_points > 40) {
    throw InputError("font_size_points",
                     "must be in [6, 40], not " + std::to_string(font_size_points));
  }
}

}  // namespace allocsim::plots
