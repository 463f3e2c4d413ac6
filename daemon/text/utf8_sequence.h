#pragma once
// Well-formed UTF-8, as the daemon's text outputs (log lines, the metrics page) check it before
// copying a client's bytes through: anything else is escaped or replaced by the caller.

#include <cstddef>
#include <string_view>

namespace yoke::daemon::utf8 {

// Length of the well-formed multi-byte UTF-8 sequence that starts at text[at], or 0 when there
// is none (plain ASCII included): overlong forms, surrogates and code points past U+10FFFF are
// refused.
inline std::size_t sequence_length(std::string_view text, std::size_t at) {
  const auto byte = [&](std::size_t i) { return static_cast<unsigned char>(text[i]); };
  const unsigned char lead = byte(at);
  std::size_t length = 0;
  unsigned char second_min = 0x80, second_max = 0xbf;
  if (lead >= 0xc2 && lead <= 0xdf) {
    length = 2;
  } else if (lead >= 0xe0 && lead <= 0xef) {
    length = 3;
    if (lead == 0xe0) second_min = 0xa0;  // overlong
    if (lead == 0xed) second_max = 0x9f;  // surrogates
  } else if (lead >= 0xf0 && lead <= 0xf4) {
    length = 4;
    if (lead == 0xf0) second_min = 0x90;  // overlong
    if (lead == 0xf4) second_max = 0x8f;  // past U+10FFFF
  } else {
    return 0;
  }
  if (text.size() - at < length) return 0;
  if (byte(at + 1) < second_min || byte(at + 1) > second_max) return 0;
  for (std::size_t i = at + 2; i < at + length; ++i) {
    if ((byte(i) & 0xc0) != 0x80) return 0;
  }
  return length;
}

}  // namespace yoke::daemon::utf8
