#include "freed_memory.h"

#include <malloc.h>

#include <cstdlib>
#include <cstring>

namespace yoke::daemon {

bool keep_freed_memory_for_reuse() {
  // Only the operator's own thresholds win: other malloc tunables (the systemd unit's
  // glibc.malloc.hugetlb) leave these two to us.
  const char* tunables = std::getenv("GLIBC_TUNABLES");
  if (tunables != nullptr && (std::strstr(tunables, "glibc.malloc.mmap_threshold") != nullptr ||
                              std::strstr(tunables, "glibc.malloc.trim_threshold") != nullptr)) {
    return false;
  }
  // Either call also stops glibc from moving the mapping threshold by itself.
  const bool mapped = ::mallopt(M_MMAP_THRESHOLD, static_cast<int>(kMappedBlockBytes)) == 1;
  const bool kept = ::mallopt(M_TRIM_THRESHOLD, static_cast<int>(kKeptFreeBytes)) == 1;
  return mapped && kept;
}

}  // namespace yoke::daemon
