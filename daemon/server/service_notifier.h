// Readiness and shutdown reports to a service manager (systemd's Type=notify), without
// libsystemd: the manager names a unix datagram socket in $NOTIFY_SOCKET, and each report is
// one datagram of newline-separated KEY=VALUE assignments (READY=1, STOPPING=1, STATUS=text).
// The protocol is small and stable (sd_notify(3)), so a few lines here cost less than a
// library link and a package dependency that only this would use.
#pragma once

#include <string>
#include <string_view>

namespace yoke::daemon {

// The address a report goes to: "/path" (a socket file) or "@name" (Linux's abstract
// namespace: the '@' stands for a leading NUL byte).
class ServiceNotifier {
 public:
  // Reads $NOTIFY_SOCKET once; without it (not started by a service manager), or with an
  // address of a kind this file does not speak, every report is a no-op that returns false.
  static ServiceNotifier from_environment();
  explicit ServiceNotifier(std::string address);

  // Whether reports go anywhere.
  bool enabled() const { return !address_.empty(); }

  // Sends `assignments` as one datagram; true once the manager's socket took it. A failure is
  // never fatal (a daemon keeps serving when its manager went away) and is returned, not
  // thrown; the first one is logged. One socket, one sendto: O(size of the message).
  bool notify(std::string_view assignments) const;

  // READY=1 with a status line: every socket is bound and recovery is done.
  bool ready(std::string_view status) const;
  // STOPPING=1 with a status line: shutdown has begun (final window and snapshot).
  bool stopping(std::string_view status) const;
  // A status line alone (shown by `systemctl status`).
  bool status(std::string_view status) const;

 private:
  std::string address_;  // "" = off
};

}  // namespace yoke::daemon
