// YOKE_DCHECK(condition, message): a stated precondition or invariant, checked where it is cheap
// to be wrong loudly and compiled out where speed matters.
//
// Active when YOKE_DCHECKS is 1: CMake defines it in the sanitizer build (YOKE_SANITIZE) and in
// Debug builds. There a failed check prints "file:line: YOKE_DCHECK(condition) failed: message"
// on stderr and aborts (the sanitizers print the stack). Elsewhere (Release) the condition is
// compiled but never evaluated, so it costs nothing and may be as slow as it needs to be, but it
// must not have side effects. Use it for what a caller promised (the "Precondition:" lines of
// the headers), never for input a user can get wrong: that is an InputError or a check result.
#pragma once

#if defined(YOKE_DCHECKS) && YOKE_DCHECKS

#include <cstdio>
#include <cstdlib>

namespace yoke::detail {

[[noreturn]] inline void dcheck_failed(const char* condition, const char* message, const char* file,
                                       int line) {
  std::fprintf(stderr, "%s:%d: YOKE_DCHECK(%s) failed: %s\n", file, line, condition, message);
  std::abort();
}

}  // namespace yoke::detail

#define YOKE_DCHECK(condition, message) \
  ((condition) ? static_cast<void>(0)   \
               : ::yoke::detail::dcheck_failed(#condition, message, __FILE__, __LINE__))

#else

// sizeof keeps the condition compiled (names stay checked, no unused-variable warnings) without
// evaluating it.
#define YOKE_DCHECK(condition, message) static_cast<void>(sizeof(!(condition)))

#endif
