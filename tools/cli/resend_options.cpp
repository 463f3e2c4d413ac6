#include "resend_options.h"

#include "daemon/service/unix_time.h"
#include "number_options.h"

namespace yoke::cli {

void add_resend_options(CLI::App& command, ResendOptions& options, const ResendHelp& help) {
  command.add_option("--client-id", options.client_id, help.client_id)->check(kNotEmpty);
  add_timeout_option(command, options.timeout_ms, help.timeout, false);
  command.add_option("--retries", options.retries, help.retries)
      ->check(kNotNegative)
      ->capture_default_str();
  add_owner_wait_option(command, options.owner_wait_ms);
}

SenderSettings sender_settings(const ResendOptions& options, const std::string& command) {
  SenderSettings settings;
  settings.client_id = options.client_id.empty() ? default_client_id(command) : options.client_id;
  settings.first_batch_number = daemon::unix_time_us();
  settings.in_flight = 1;
  settings.timeout = timeout_from_option(options.timeout_ms);
  settings.retries = options.retries;
  return settings;
}

}  // namespace yoke::cli
