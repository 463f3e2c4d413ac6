// An allocator for large arrays read at random (the graph's incidence arena): blocks of 4 MiB
// and more are aligned to 2 MiB and offered to the kernel for transparent huge pages, so that
// random reads across them miss the TLB far less. Smaller blocks are ordinary allocations.
// Slots that resize() adds are default-initialised, not zeroed: an array on this allocator must
// not read a slot before writing it.
#pragma once

#include <cstddef>
#include <new>
#include <utility>

#include <sys/mman.h>

namespace yoke {

template <class T>
struct HugePageAllocator {
  using value_type = T;
  static constexpr std::size_t kHugePage = std::size_t{2} << 20;
  static constexpr std::size_t kFromBytes = 2 * kHugePage;

  HugePageAllocator() = default;
  template <class U>
  HugePageAllocator(const HugePageAllocator<U>&) {}  // NOLINT: allocators convert implicitly

  T* allocate(std::size_t count) {
    const std::size_t bytes = count * sizeof(T);
    if (bytes < kFromBytes) return static_cast<T*>(::operator new(bytes));
    const std::size_t rounded = (bytes + kHugePage - 1) / kHugePage * kHugePage;
    void* block = ::operator new(rounded, std::align_val_t{kHugePage});
    // Advice only: without huge pages the array works the same, a little slower.
    ::madvise(block, rounded, MADV_HUGEPAGE);
    return static_cast<T*>(block);
  }
  void deallocate(T* block, std::size_t count) {
    const std::size_t bytes = count * sizeof(T);
    if (bytes < kFromBytes) {
      ::operator delete(block);
    } else {
      ::operator delete(block, std::align_val_t{kHugePage});
    }
  }
  // Default-initialises what resize() adds: for plain structs (Incidence) no zeroing, which a
  // rebuild of the arena paid for twice over (its slack is never read before a push writes it).
  template <class U>
  void construct(U* slot) {
    ::new (static_cast<void*>(slot)) U;
  }
  template <class U, class... Args>
  void construct(U* slot, Args&&... args) {
    ::new (static_cast<void*>(slot)) U(std::forward<Args>(args)...);
  }
  template <class U>
  bool operator==(const HugePageAllocator<U>&) const { return true; }
};

}  // namespace yoke
