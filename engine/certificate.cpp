#include "certificate.h"

namespace yoke {
CheckResult check_certificate(const Graph&, const Certificate&) { return {}; }
}  // namespace yoke
