#include "crc32c.h"

#include <array>
#include <cstddef>
#include <cstring>

#if defined(__x86_64__)
#include <nmmintrin.h>
#endif

namespace yoke::journal {
namespace {

constexpr std::uint32_t kPolynomial = 0x82F63B78u;  // Castagnoli, bit-reversed

using Table = std::array<std::array<std::uint32_t, 256>, 8>;

// tables[0] advances the CRC by one byte; tables[k] by one byte followed by k zero bytes, so
// eight table look-ups advance it by eight bytes at once.
constexpr Table make_tables() {
  Table tables{};
  for (std::uint32_t i = 0; i < 256; ++i) {
    std::uint32_t crc = i;
    for (int bit = 0; bit < 8; ++bit) crc = (crc >> 1) ^ ((crc & 1u) ? kPolynomial : 0u);
    tables[0][i] = crc;
  }
  for (std::size_t k = 1; k < 8; ++k) {
    for (std::size_t i = 0; i < 256; ++i) {
      const std::uint32_t previous = tables[k - 1][i];
      tables[k][i] = (previous >> 8) ^ tables[0][previous & 0xFFu];
    }
  }
  return tables;
}

constexpr Table kTables = make_tables();

std::uint32_t load_le32(const unsigned char* p) {
  return std::uint32_t{p[0]} | (std::uint32_t{p[1]} << 8) | (std::uint32_t{p[2]} << 16) |
         (std::uint32_t{p[3]} << 24);
}

#if defined(__x86_64__)
// The instruction computes the same reflected CRC-32C step on the running state (no inversion
// inside), so it continues the tables' state exactly.
__attribute__((target("sse4.2"))) std::uint32_t extend_by_instruction(std::uint32_t crc,
                                                                      std::string_view b) {
  const char* p = b.data();
  std::size_t n = b.size();
  std::uint64_t state = ~crc;
  for (; n >= 8; p += 8, n -= 8) {
    std::uint64_t word;
    std::memcpy(&word, p, 8);
    state = _mm_crc32_u64(state, word);
  }
  auto narrow = static_cast<std::uint32_t>(state);
  for (; n > 0; ++p, --n) narrow = _mm_crc32_u8(narrow, static_cast<unsigned char>(*p));
  return ~narrow;
}

// Asked once, on first use: not from a static initializer, which could run before the
// compiler's own CPU detection (hence __builtin_cpu_init).
bool has_instruction() {
  static const bool has = [] {
    __builtin_cpu_init();
    return __builtin_cpu_supports("sse4.2") != 0;
  }();
  return has;
}
#endif

}  // namespace

std::uint32_t crc32c_extend(std::uint32_t crc, std::string_view b) {
#if defined(__x86_64__)
  if (has_instruction()) return extend_by_instruction(crc, b);
#endif
  return crc32c_extend_by_tables(crc, b);
}

std::uint32_t crc32c_extend_by_tables(std::uint32_t crc, std::string_view b) {
  const auto* p = reinterpret_cast<const unsigned char*>(b.data());
  std::size_t n = b.size();
  std::uint32_t state = ~crc;
  for (; n >= 8; p += 8, n -= 8) {
    const std::uint32_t low = state ^ load_le32(p);
    const std::uint32_t high = load_le32(p + 4);
    state = kTables[7][low & 0xFFu] ^ kTables[6][(low >> 8) & 0xFFu] ^
            kTables[5][(low >> 16) & 0xFFu] ^ kTables[4][low >> 24] ^
            kTables[3][high & 0xFFu] ^ kTables[2][(high >> 8) & 0xFFu] ^
            kTables[1][(high >> 16) & 0xFFu] ^ kTables[0][high >> 24];
  }
  for (; n > 0; ++p, --n) state = (state >> 8) ^ kTables[0][(state ^ *p) & 0xFFu];
  return ~state;
}

std::uint32_t crc32c(std::string_view data) { return crc32c_extend(0, data); }

}  // namespace yoke::journal
