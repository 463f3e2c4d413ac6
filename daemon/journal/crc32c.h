// CRC-32C (Castagnoli): the checksum of journal records and snapshot files. On x86-64 CPUs
// with SSE 4.2 (checked at run time) the CPU's crc32 instruction does 8 bytes at a time, a few
// times faster than the tables; elsewhere table-driven (slicing by 8), several hundred MB/s.
#pragma once

#include <cstdint>
#include <string_view>

namespace yoke::journal {

// CRC-32C of `data`: reflected polynomial 0x82F63B78, initial value and final XOR 0xFFFFFFFF.
// crc32c("123456789") == 0xE3069283. O(size).
std::uint32_t crc32c(std::string_view data);

// The CRC-32C of a + b, given crc == crc32c(a): checksums bytes that are not contiguous.
std::uint32_t crc32c_extend(std::uint32_t crc, std::string_view b);

// crc32c_extend by the tables alone, what CPUs without the instruction run; its own name so
// that the tests check it on every machine.
std::uint32_t crc32c_extend_by_tables(std::uint32_t crc, std::string_view b);

}  // namespace yoke::journal
