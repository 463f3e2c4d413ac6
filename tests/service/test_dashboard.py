"""The metrics dashboard (packaging/dashboard/yoked-dashboard.json, a Grafana dashboard a user
imports) names only metrics and labels that yoked serves. The reference is a real yoked's
/metrics page after traffic that makes every family appear (batches accepted, retried and
refused, a message that is not a batch, a snapshot), cross-checked with the names registered in
daemon/server/daemon_metrics.{h,cpp}, so that a metric renamed in the source fails here too."""

import json
import os
import re
import unittest
import urllib.request

from e2e_harness import (SLOWDOWN, Daemon, IngestClient, ask, check_binaries, make_batch_request)

SOURCE_DIR = os.environ.get("YOKE_SOURCE_DIR", "")
DASHBOARD = os.path.join(SOURCE_DIR, "packaging", "dashboard", "yoked-dashboard.json")
REGISTRATIONS = [os.path.join(SOURCE_DIR, "daemon", "server", "daemon_metrics" + suffix)
                 for suffix in (".h", ".cpp")]

# Labels Prometheus adds to every series it scrapes, and the bucket bound of histograms.
TARGET_LABELS = {"instance", "job"}
HISTOGRAM_SUFFIXES = ("_bucket", "_sum", "_count")

# A metric name with its optional {matchers}; `by (...)` / `without (...)`; one matcher's label.
SELECTOR = re.compile(r"\b(yoke_[a-z0-9_]+)\s*(\{[^}]*\})?")
GROUPING = re.compile(r"\b(?:by|without)\s*\(([^)]*)\)")
MATCHER = re.compile(r"([a-zA-Z_][a-zA-Z0-9_]*)\s*(?:=~|!~|!=|=)")


def scrape_families(text):
    """{family: (type, {label names})} from the Prometheus text format."""
    families = {}
    for line in text.splitlines():
        if line.startswith("# TYPE "):
            _, _, name, kind = line.split()
            families[name] = (kind, set())
    for line in text.splitlines():
        if not line or line.startswith("#"):
            continue
        series = re.match(r"([a-zA-Z_:][a-zA-Z0-9_:]*)(\{[^}]*\})?", line)
        name, labels = series[1], series[2] or ""
        family = family_of(name, families)
        if family is None:
            raise AssertionError(f"series {name} has no # TYPE line")
        families[family][1].update(MATCHER.findall(labels))
    return families


def family_of(series_name, families):
    if series_name in families:
        return series_name
    for suffix in HISTOGRAM_SUFFIXES:
        base = series_name.removesuffix(suffix)
        if base != series_name and families.get(base, ("",))[0] == "histogram":
            return base
    return None


def registered_names():
    """The metric names daemon_metrics.{h,cpp} register: every "yoke_..." string literal there
    (names are passed to the registry's counter(), gauge() and histogram() directly or as a
    named constant)."""
    names = set()
    for path in REGISTRATIONS:
        with open(path) as source:
            names.update(re.findall(r"\"(yoke_[a-z0-9_]+)\"", source.read()))
    return names


def expressions(dashboard):
    """Every PromQL expression of the dashboard: panel targets and template variable queries."""
    found = []
    for panel in dashboard["panels"]:
        for target in panel.get("targets", []):
            found.append((panel["title"], target["expr"]))
    for variable in dashboard["templating"]["list"]:
        if variable["type"] == "query":
            found.append((f"variable {variable['name']}", variable["definition"]))
    return found


class DashboardTest(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        check_binaries()
        with open(DASHBOARD) as source:
            cls.dashboard = json.load(source)
        daemon = Daemon()
        try:
            daemon.start()
            client = IngestClient(daemon.ingest)
            batch = make_batch_request([("set", 1, 2, 4), ("set", 2, 3, 5)], pool="harbour",
                                       client_id="dash", client_batch=1)
            assert client.send(batch).HasField("accepted")
            assert client.send(batch).accepted.duplicate  # a retry
            refused = make_batch_request([("unset", 7, 8)], pool="harbour", client_id="dash",
                                         client_batch=2)
            assert client.send(refused).HasField("rejected")
            reply = client.send_bytes(b"\xff not a message")
            assert reply is not None and reply.ack.HasField("rejected")
            client.close()
            assert ask(daemon.query, "summary", pool="harbour") is not None
            assert ask(daemon.query, "snapshot", timeout_ms=5000 * SLOWDOWN) is not None
            with urllib.request.urlopen(daemon.metrics_url, timeout=5 * SLOWDOWN) as page:
                cls.families = scrape_families(page.read().decode())
        finally:
            daemon.cleanup()

    def test_every_metric_and_label_it_names_is_served(self):
        checked = 0
        for where, expr in expressions(self.dashboard):
            for name, matchers in SELECTOR.findall(expr):
                family = family_of(name, self.families)
                self.assertIsNotNone(family, f"{where}: {name} is not a metric of yoked")
                if name.endswith("_bucket") or family != name:
                    self.assertEqual(self.families[family][0], "histogram", f"{where}: {name}")
                labels = self.families[family][1] | TARGET_LABELS
                for label in MATCHER.findall(matchers):
                    self.assertIn(label, labels, f"{where}: {name} has no label {label}")
                checked += 1
            # Grouping labels must exist on a metric the expression reads.
            read = {family_of(name, self.families) for name, _ in SELECTOR.findall(expr)}
            offered = set(TARGET_LABELS)
            for family in read:
                offered |= self.families[family][1]
            for grouping in GROUPING.findall(expr):
                for label in filter(None, (part.strip() for part in grouping.split(","))):
                    self.assertIn(label, offered, f"{where}: grouping by {label}")
            label_values = re.search(r"label_values\((yoke_[a-z0-9_]+)[^,]*,\s*(\w+)\)", expr)
            if label_values:
                self.assertIn(label_values[2], self.families[label_values[1]][1] | TARGET_LABELS,
                              where)
        self.assertGreater(checked, 20)

    def test_every_served_family_is_registered_in_the_source_and_shown(self):
        registered = registered_names()
        self.assertGreater(len(registered), 15)  # the pattern still finds the registrations
        self.assertLessEqual(set(self.families), registered)
        shown = {family_of(name, self.families)
                 for _, expr in expressions(self.dashboard) for name, _ in SELECTOR.findall(expr)}
        self.assertEqual(shown, registered, "every metric of yoked has a panel")

    def test_importable_shape(self):
        dashboard = self.dashboard
        self.assertEqual(dashboard["uid"], "yoked-service")
        ids = [panel["id"] for panel in dashboard["panels"]]
        self.assertEqual(len(ids), len(set(ids)))
        variables = {variable["name"] for variable in dashboard["templating"]["list"]}
        self.assertEqual(variables, {"datasource", "instance", "pool"})
        for panel in dashboard["panels"]:
            for key in ("h", "w", "x", "y"):
                self.assertIn(key, panel["gridPos"], panel["title"])
            self.assertLessEqual(panel["gridPos"]["x"] + panel["gridPos"]["w"], 24, panel["title"])
            for target in panel.get("targets", []):
                self.assertEqual(target["datasource"]["uid"], "${datasource}", panel["title"])
                # Variables used are declared.
                for used in re.findall(r"\$(\w+)", target["expr"]):
                    self.assertIn(used, variables | {"__rate_interval"}, panel["title"])


if __name__ == "__main__":
    unittest.main()
