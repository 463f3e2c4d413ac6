// Checks for whole-number options, where CLI11's own validators mislead.
#pragma once

#include <CLI/CLI.hpp>

namespace yoke::cli {

// Rejects a leading '-': CLI11 would wrap "-6" around to a huge unsigned value.
extern const CLI::Validator kNotNegative;

// A whole number >= 1 (CLI::PositiveNumber's message prints the range up to the largest double).
extern const CLI::Validator kAtLeastOne;

}  // namespace yoke::cli
