// Facts about the machine and the source a benchmark ran on, for the head of its report.
#pragma once

#include <string>

namespace yoke::bench {

// CPUs this process may run on, as nproc counts them (affinity, not the machine total).
long usable_cpus();

// The first "model name" of /proc/cpuinfo, or "unknown".
std::string cpu_model();

// "1.00 0.50 0.25" from /proc/loadavg, or "unknown".
std::string load_average();

// The commit of the source tree the program was built from ("3d07ebe", with " + uncommitted
// changes" when files differ from it or new ones are not yet committed), or "unknown" when git
// or the repository is missing. Runs only read-only git commands, without git's optional locks.
std::string source_commit();

}  // namespace yoke::bench
