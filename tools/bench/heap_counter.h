// Live and peak heap bytes of the whole process, counted by replacement global operator
// new/delete (every form: plain, array, nothrow, sized, aligned) defined in heap_counter.cpp.
// Linking that file into a program is what turns the counting on.
//
// Counts the bytes asked for, not the allocator's rounding, so the figure is the data the
// code chose to hold, comparable between solvers.
#pragma once

#include <cstddef>

namespace yoke::bench::heap {

std::size_t live_bytes();
std::size_t peak_bytes();

// Starts a measurement window: the peak becomes the current live size.
void reset_peak();

// True when the replacement operators are the ones in use (checked by allocating once): a
// benchmark whose memory column silently read zero would be worse than none.
bool counting_works();

// Peak bytes above `baseline` since reset_peak(); `baseline` is live_bytes() at the reset.
inline std::size_t peak_above(std::size_t baseline) {
  const std::size_t peak = peak_bytes();
  return peak > baseline ? peak - baseline : 0;
}

}  // namespace yoke::bench::heap
