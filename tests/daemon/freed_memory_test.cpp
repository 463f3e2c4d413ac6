// yoked's allocator settings (daemon/server/freed_memory.h): a window-sized block freed stays
// with the process for the next window instead of going back to the kernel, a very large one
// is still mapped on its own, and an operator's GLIBC_TUNABLES malloc setting wins.
#include <malloc.h>

#include <cstddef>
#include <cstdlib>
#include <cstring>
#include <optional>
#include <string>

#include <gtest/gtest.h>

#include "daemon/server/freed_memory.h"

#if defined(__SANITIZE_ADDRESS__) || defined(__SANITIZE_THREAD__)
#define YOKE_SANITIZED_MALLOC 1
#elif defined(__has_feature)
#if __has_feature(address_sanitizer) || __has_feature(thread_sanitizer)
#define YOKE_SANITIZED_MALLOC 1
#endif
#endif

namespace yoke::daemon {
namespace {

// Allocates `bytes`, touches every page (so that the block is really there), and returns it.
char* touched_block(std::size_t bytes) {
  char* block = static_cast<char*>(std::malloc(bytes));
  std::memset(block, 1, bytes);
  return block;
}

// GLIBC_TUNABLES set to `value` for the guard's lifetime, then as it was.
class ScopedTunables {
 public:
  explicit ScopedTunables(const char* value) {
    const char* before = std::getenv("GLIBC_TUNABLES");
    if (before != nullptr) before_ = before;
    ::setenv("GLIBC_TUNABLES", value, 1);
  }
  ~ScopedTunables() {
    if (before_) {
      ::setenv("GLIBC_TUNABLES", before_->c_str(), 1);
    } else {
      ::unsetenv("GLIBC_TUNABLES");
    }
  }
  ScopedTunables(const ScopedTunables&) = delete;
  ScopedTunables& operator=(const ScopedTunables&) = delete;

 private:
  std::optional<std::string> before_;
};

TEST(FreedMemory, OperatorsMallocTunablesWin) {
  const ScopedTunables tunables("glibc.malloc.trim_threshold=1048576");
  EXPECT_FALSE(keep_freed_memory_for_reuse());
}

TEST(FreedMemory, OtherMallocTunablesLeaveTheThresholdsToYoked) {
#ifdef YOKE_SANITIZED_MALLOC
  GTEST_SKIP() << "a sanitizer's allocator, not glibc's";
#endif
  const ScopedTunables tunables("glibc.malloc.hugetlb=1");  // as the systemd unit sets
  EXPECT_TRUE(keep_freed_memory_for_reuse());
}

TEST(FreedMemory, WindowSizedBlocksStayLargeOnesAreMapped) {
  const char* tunables = std::getenv("GLIBC_TUNABLES");
  if (tunables != nullptr && std::strstr(tunables, "threshold") != nullptr) {
    GTEST_SKIP() << "GLIBC_TUNABLES sets a malloc threshold here";
  }
#ifdef YOKE_SANITIZED_MALLOC
  GTEST_SKIP() << "a sanitizer's allocator, not glibc's";
#endif
  ASSERT_TRUE(keep_freed_memory_for_reuse());
  const std::size_t window_sized = std::size_t{8} << 20;
  const std::size_t mapped_before = mallinfo2().hblks;
  char* block = touched_block(window_sized);
  EXPECT_EQ(mallinfo2().hblks, mapped_before) << "an 8 MiB block was mapped on its own";
  const std::size_t free_before = mallinfo2().fordblks;
  std::free(block);
  EXPECT_GE(mallinfo2().fordblks, free_before + window_sized - (std::size_t{64} << 10))
      << "the freed 8 MiB went back to the kernel";

  char* large = touched_block(kMappedBlockBytes + (std::size_t{1} << 20));
  EXPECT_EQ(mallinfo2().hblks, mapped_before + 1);
  std::free(large);
  EXPECT_EQ(mallinfo2().hblks, mapped_before);
}

}  // namespace
}  // namespace yoke::daemon
