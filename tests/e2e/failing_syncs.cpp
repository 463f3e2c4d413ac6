// Preloaded into a real yoked (LD_PRELOAD) by tests/e2e/test_disk_fault.py: the process's N-th
// fdatasync (YOKE_FAIL_FDATASYNC_AT=N) or N-th sync_file_range (YOKE_FAIL_WRITE_BACK_AT=N),
// each counted over every thread, fails with EIO and does nothing, as a disk's failed write-back
// would; every other call is the system's. The daemon's journal and snapshot syncs and the
// snapshots' paced write-backs all come here (daemon/journal/file_system.cpp).
#include <dlfcn.h>
#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstdlib>

namespace {

long setting(const char* name) {
  const char* value = std::getenv(name);
  return value == nullptr ? 0L : std::atol(value);
}

// True for the call that is to fail.
bool fails(std::atomic<long>& calls, long fail_at) { return calls.fetch_add(1) + 1 == fail_at; }

std::atomic<long> fdatasync_calls{0};
std::atomic<long> write_back_calls{0};

}  // namespace

extern "C" int fdatasync(int fd) {
  using Real = int (*)(int);
  static const Real real = reinterpret_cast<Real>(dlsym(RTLD_NEXT, "fdatasync"));
  static const long fail_at = setting("YOKE_FAIL_FDATASYNC_AT");
  if (fails(fdatasync_calls, fail_at)) {
    errno = EIO;
    return -1;
  }
  return real(fd);
}

extern "C" int sync_file_range(int fd, off64_t offset, off64_t bytes, unsigned int flags) {
  using Real = int (*)(int, off64_t, off64_t, unsigned int);
  static const Real real = reinterpret_cast<Real>(dlsym(RTLD_NEXT, "sync_file_range"));
  static const long fail_at = setting("YOKE_FAIL_WRITE_BACK_AT");
  if (fails(write_back_calls, fail_at)) {
    errno = EIO;
    return -1;
  }
  return real(fd, offset, bytes, flags);
}
