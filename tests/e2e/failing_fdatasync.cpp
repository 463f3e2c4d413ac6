// Preloaded into a real yoked (LD_PRELOAD) by tests/e2e/test_disk_fault.py: the process's N-th
// fdatasync (YOKE_FAIL_FDATASYNC_AT=N, counted over every thread) fails with EIO and does
// nothing, as a disk's failed write-back would; every other call is the system's. The daemon's
// journal and snapshot syncs all come here (daemon/journal/file_system.cpp calls ::fdatasync).
#include <dlfcn.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstdlib>

namespace {

std::atomic<long> calls{0};

}  // namespace

extern "C" int fdatasync(int fd) {
  using Real = int (*)(int);
  static const Real real = reinterpret_cast<Real>(dlsym(RTLD_NEXT, "fdatasync"));
  static const long fail_at = [] {
    const char* value = std::getenv("YOKE_FAIL_FDATASYNC_AT");
    return value == nullptr ? 0L : std::atol(value);
  }();
  if (calls.fetch_add(1) + 1 == fail_at) {
    errno = EIO;
    return -1;
  }
  return real(fd);
}
