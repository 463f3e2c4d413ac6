#include "journal_error.h"

#include <utility>

namespace yoke::journal {

Corruption::Corruption(std::filesystem::path segment, std::uint64_t offset,
                       const std::string& reason)
    : Error("journal segment " + segment.string() + " is damaged at offset " +
            std::to_string(offset) + ": " + reason),
      segment_(std::move(segment)),
      offset_(offset) {}

}  // namespace yoke::journal
