#include "number_options.h"

#include <string>

namespace yoke::cli {

const CLI::Validator kNotNegative(
    [](std::string& text) {
      return text.starts_with('-') ? std::string("must not be negative") : std::string();
    },
    "");

const CLI::Validator kAtLeastOne(
    [](std::string& text) {
      return text.find_first_not_of("0123456789") == std::string::npos &&
                     text.find_first_not_of('0') != std::string::npos
                 ? std::string()
                 : std::string("must be a whole number of at least 1");
    },
    "");

}  // namespace yoke::cli
