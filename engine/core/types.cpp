#include "yoke/types.h"

#include <algorithm>

namespace yoke {

const char* mode_name(Mode mode) {
  switch (mode) {
    case Mode::max_weight: return "max-weight";
    case Mode::max_cardinality: return "max-cardinality";
    case Mode::perfect: return "perfect";
  }
  return "unknown";
}

std::string int128_text(Int128 value) {
  if (value == 0) return "0";
  const bool negative = value < 0;
  // Through unsigned so that the most negative value also converts.
  __extension__ typedef unsigned __int128 UInt128;
  UInt128 magnitude =
      negative ? UInt128{0} - static_cast<UInt128>(value) : static_cast<UInt128>(value);
  std::string digits;
  while (magnitude != 0) {
    digits.push_back(static_cast<char>('0' + static_cast<int>(magnitude % 10)));
    magnitude /= 10;
  }
  if (negative) digits.push_back('-');
  std::reverse(digits.begin(), digits.end());
  return digits;
}

Mode parse_mode(const std::string& text) {
  if (text == "max-weight") return Mode::max_weight;
  if (text == "max-cardinality") return Mode::max_cardinality;
  if (text == "perfect") return Mode::perfect;
  throw InputError("unknown mode '" + text + "' (expected max-weight, max-cardinality or perfect)");
}

}  // namespace yoke
