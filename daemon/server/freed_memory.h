// How yoked's allocator hands freed memory back to the kernel. By default glibc returns a
// freed block of more than a moving threshold (128 KiB at first) straight to the kernel
// (munmap), and the top of a heap once 128 KiB of it is free: the next window's buffers (the
// repair's changes, the diff, the journal's bytes: a few MB per window, made and freed each
// window) then come back as fresh pages, which the kernel zeroes on first touch. Measured at
// 2 pools (yoke_daemon_bench's per-thread minor faults): 15 faults per 1000 events on the
// repair workers, 2-4 with the settings below. Retained: up to 64 MiB of free space on top of
// each of the allocator's heaps (one per thread that allocated at once, at most 8 per core),
// reused by the next allocations; blocks of 32 MiB or more are still mapped on their own.
#pragma once

#include <cstddef>

namespace yoke::daemon {

inline constexpr std::size_t kMappedBlockBytes = std::size_t{32} << 20;  // glibc's largest
inline constexpr std::size_t kKeptFreeBytes = std::size_t{64} << 20;

// Sets the thresholds above, unless GLIBC_TUNABLES sets glibc.malloc.mmap_threshold or
// trim_threshold (an operator's choice wins; other tunables, such as the systemd unit's
// hugetlb, do not stop it). Call once at the start. Returns whether it set them.
bool keep_freed_memory_for_reuse();

}  // namespace yoke::daemon
