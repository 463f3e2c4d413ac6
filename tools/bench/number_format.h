// How the benchmark reports write numbers.
#pragma once

#include <cstddef>
#include <string>

namespace yoke::bench {

// `value` through a printf pattern with one double ("%.2f"); at most 63 characters.
std::string format(const char* pattern, double value);

// Bytes in MiB with one decimal ("12.3").
std::string mib(std::size_t bytes);

}  // namespace yoke::bench
