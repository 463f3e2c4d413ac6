"""The [cluster] section of a yoked configuration file, written for the daemons a test or the
cluster demo starts on a local NATS cluster (see daemon/yoked.example.toml for every key)."""

import json


def toml_value(value):
    """A TOML value for a str, int or list of str (TOML's basic strings escape as JSON does)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (str, list)):
        return json.dumps(value)
    return str(value)


def cluster_section(instance, servers, daemons, roles, **settings):
    """[cluster] naming `instance` as this daemon, then one [cluster.instances.NAME] table per
    daemon. `daemons` maps name -> an object with .ingest, .query, .publish endpoints; `roles`
    maps name -> (owned pools, stood-by pools or None to leave the key out); `settings` are
    further [cluster] keys in the order given (stream, heartbeat_ms, takeover_ms, ...)."""
    lines = ["[cluster]", 'backend = "jetstream"', f"servers = {toml_value(list(servers))}"]
    lines += [f"{key} = {toml_value(value)}" for key, value in settings.items()]
    lines.append(f"instance = {toml_value(instance)}")
    for name, daemon in daemons.items():
        owns, stands_by = roles[name]
        lines += ["", f"[cluster.instances.{name}]",
                  f"ingest = {toml_value(daemon.ingest)}",
                  f"query = {toml_value(daemon.query)}",
                  f"publish = {toml_value(daemon.publish)}",
                  f"owns = {toml_value(list(owns))}"]
        if stands_by is not None:
            lines.append(f"stands_by = {toml_value(list(stands_by))}")
    return "\n".join(lines) + "\n"
