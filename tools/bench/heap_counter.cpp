#include "tools/bench/heap_counter.h"

#include <atomic>
#include <cstdint>
#include <cstdlib>
#include <new>

namespace yoke::bench::heap {
namespace {

// Relaxed atomics: the solvers are single-threaded, but nothing here may break if a library
// allocates from another thread.
std::atomic<std::size_t> g_live{0};
std::atomic<std::size_t> g_peak{0};

// Each block carries its size in a header just before the pointer handed out, because the
// unsized forms of delete do not say how big the block was. The header is as large as the
// block's alignment, so the pointer handed out keeps that alignment.
constexpr std::size_t kDefaultHeader = __STDCPP_DEFAULT_NEW_ALIGNMENT__;
static_assert(kDefaultHeader >= sizeof(std::size_t));

void count_allocation(std::size_t size) {
  const std::size_t now = g_live.fetch_add(size, std::memory_order_relaxed) + size;
  std::size_t peak = g_peak.load(std::memory_order_relaxed);
  while (now > peak && !g_peak.compare_exchange_weak(peak, now, std::memory_order_relaxed)) {
  }
}

void* allocate(std::size_t size, std::size_t alignment) {
  const std::size_t header = alignment < kDefaultHeader ? kDefaultHeader : alignment;
  if (size > SIZE_MAX - 2 * header) return nullptr;
  void* block;
  if (header == kDefaultHeader) {
    block = std::malloc(size + header);
  } else {
    // aligned_alloc wants a multiple of the alignment.
    block = std::aligned_alloc(header, (size + 2 * header - 1) / header * header);
  }
  if (block == nullptr) return nullptr;
  auto* user = static_cast<unsigned char*>(block) + header;
  reinterpret_cast<std::size_t*>(user)[-1] = size;
  count_allocation(size);
  return user;
}

void release(void* pointer, std::size_t alignment) {
  if (pointer == nullptr) return;
  const std::size_t header = alignment < kDefaultHeader ? kDefaultHeader : alignment;
  auto* user = static_cast<unsigned char*>(pointer);
  g_live.fetch_sub(reinterpret_cast<std::size_t*>(user)[-1], std::memory_order_relaxed);
  std::free(user - header);
}

void* allocate_or_throw(std::size_t size, std::size_t alignment) {
  void* pointer = allocate(size, alignment);
  if (pointer == nullptr) throw std::bad_alloc();
  return pointer;
}

constexpr std::size_t kPlain = 0;  // "default alignment" for allocate/release

}  // namespace

std::size_t live_bytes() { return g_live.load(std::memory_order_relaxed); }
std::size_t peak_bytes() { return g_peak.load(std::memory_order_relaxed); }
void reset_peak() { g_peak.store(g_live.load(std::memory_order_relaxed), std::memory_order_relaxed); }

bool counting_works() {
  const std::size_t before = live_bytes();
  auto* probe = new unsigned char[4096];
  probe[0] = 1;
  // volatile: the allocation must not be elided, or the check proves nothing.
  const volatile unsigned char* keep = probe;
  const bool counted = live_bytes() >= before + 4096 && keep[0] == 1;
  delete[] probe;
  return counted && live_bytes() == before;
}

}  // namespace yoke::bench::heap

using yoke::bench::heap::allocate;
using yoke::bench::heap::allocate_or_throw;
using yoke::bench::heap::kPlain;
using yoke::bench::heap::release;

namespace {
std::size_t align_of(std::align_val_t alignment) { return static_cast<std::size_t>(alignment); }
}  // namespace

void* operator new(std::size_t size) { return allocate_or_throw(size, kPlain); }
void* operator new[](std::size_t size) { return allocate_or_throw(size, kPlain); }
void* operator new(std::size_t size, const std::nothrow_t&) noexcept { return allocate(size, kPlain); }
void* operator new[](std::size_t size, const std::nothrow_t&) noexcept { return allocate(size, kPlain); }
void* operator new(std::size_t size, std::align_val_t a) { return allocate_or_throw(size, align_of(a)); }
void* operator new[](std::size_t size, std::align_val_t a) { return allocate_or_throw(size, align_of(a)); }
void* operator new(std::size_t size, std::align_val_t a, const std::nothrow_t&) noexcept {
  return allocate(size, align_of(a));
}
void* operator new[](std::size_t size, std::align_val_t a, const std::nothrow_t&) noexcept {
  return allocate(size, align_of(a));
}

void operator delete(void* p) noexcept { release(p, kPlain); }
void operator delete[](void* p) noexcept { release(p, kPlain); }
void operator delete(void* p, std::size_t) noexcept { release(p, kPlain); }
void operator delete[](void* p, std::size_t) noexcept { release(p, kPlain); }
void operator delete(void* p, const std::nothrow_t&) noexcept { release(p, kPlain); }
void operator delete[](void* p, const std::nothrow_t&) noexcept { release(p, kPlain); }
void operator delete(void* p, std::align_val_t a) noexcept { release(p, align_of(a)); }
void operator delete[](void* p, std::align_val_t a) noexcept { release(p, align_of(a)); }
void operator delete(void* p, std::size_t, std::align_val_t a) noexcept { release(p, align_of(a)); }
void operator delete[](void* p, std::size_t, std::align_val_t a) noexcept { release(p, align_of(a)); }
void operator delete(void* p, std::align_val_t a, const std::nothrow_t&) noexcept {
  release(p, align_of(a));
}
void operator delete[](void* p, std::align_val_t a, const std::nothrow_t&) noexcept {
  release(p, align_of(a));
}
