"""End to end: `yoke replay ... --report FILE.html` rendered by a real headless Chromium, and the
replay's progress bar on a pseudo-terminal.

The page must draw all five charts offline from file:// (its script records `data-charts-drawn`
on <body> and `data-drawn="yes"` on each canvas holding a non-blank pixel), reference nothing
outside itself, and carry in its header the numbers the plain `yoke replay` prints. Chromium
comes from Debian (tools/setup.sh installs it); a missing browser fails the test rather than
skipping it, so that CI cannot pass without rendering the page.
"""

import html.parser
import os
import pty
import re
import select
import shutil
import subprocess
import tempfile
import unittest

from e2e_harness import (SLOWDOWN, YOKE, Daemon, check_binaries, gen_stream, replay_commits,
                         run_yoke, scaled)

CHROMIUM = os.environ.get("YOKE_CHROMIUM", "/usr/bin/chromium")
CHART_IDS = ["chart-objective", "chart-changes", "chart-latency", "chart-region", "chart-busiest"]


class PageParser(html.parser.HTMLParser):
    """Tags with their attributes, the text of each id'd element, and every <style> text."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags = []          # (tag, {attr: value})
        self.text_by_id = {}
        self.styles = []
        self._open_ids = []     # (tag, id or None) of the open elements that may hold text
        self._in_style = False

    def handle_starttag(self, tag, attrs):
        attributes = dict(attrs)
        self.tags.append((tag, attributes))
        if tag == "style":
            self._in_style = True
            self.styles.append("")
        if tag in ("td", "th", "p", "code", "title", "h1", "h2"):
            self._open_ids.append((tag, attributes.get("id")))
            if attributes.get("id"):
                self.text_by_id.setdefault(attributes["id"], "")

    def handle_endtag(self, tag):
        if tag == "style":
            self._in_style = False
        if self._open_ids and self._open_ids[-1][0] == tag:
            self._open_ids.pop()

    def handle_data(self, data):
        if self._in_style:
            self.styles[-1] += data
        for _, element_id in self._open_ids:
            if element_id:
                self.text_by_id[element_id] += data

    def elements(self, tag):
        return [attrs for name, attrs in self.tags if name == tag]


def parse_page(text):
    parser = PageParser()
    parser.feed(text)
    parser.close()
    return parser


def render(test_case, page_path, work_dir):
    """The DOM of the page after its scripts ran in headless Chromium, with no network."""
    if not os.access(CHROMIUM, os.X_OK):
        test_case.fail(f"{CHROMIUM} is missing: tools/setup.sh installs Debian's chromium")
    profile = tempfile.mkdtemp(prefix="chromium-", dir=work_dir)
    command = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu",
               "--disable-dev-shm-usage", "--no-first-run", "--disable-extensions",
               "--host-resolver-rules=MAP * ~NOTFOUND",  # nothing resolves: offline for sure
               f"--user-data-dir={profile}", "--window-size=1280,2000",
               "--virtual-time-budget=5000", "--dump-dom", "file://" + os.path.abspath(page_path)]
    result = subprocess.run(command, capture_output=True, text=True, timeout=120 * SLOWDOWN)
    test_case.assertEqual(result.returncode, 0, f"chromium failed:\n{result.stderr[-3000:]}")
    test_case.assertIn("<canvas", result.stdout, f"no DOM from chromium:\n{result.stderr[-3000:]}")
    return result.stdout


def stats_events(source):
    """`stats commits N events E` of `yoke replay SOURCE --stats`: (N, E)."""
    out = run_yoke("replay", source, "--stats").stdout
    match = re.search(r"^stats commits (\d+) events (\d+)$", out, re.MULTILINE)
    return int(match[1]), int(match[2])


def commit_lines(text):
    """The commit lines with the timing masked."""
    return [re.sub(r" repair_us \d+", " repair_us T", line) for line in text.splitlines()
            if line.startswith("commit ")]


class ReportTest(unittest.TestCase):
    def setUp(self):
        check_binaries()
        self.work = tempfile.mkdtemp(prefix="yoke-report-")
        self.addCleanup(shutil.rmtree, self.work, True)

    def check_page(self, page_path, source, plain, journal):
        """The page drew five charts in Chromium, references nothing outside itself, and its
        header holds the plain replay's numbers."""
        with open(page_path, encoding="utf-8") as page_file:
            raw = page_file.read()

        # Nothing outside the file: no element loads anything over http(s) or a
        # protocol-relative address, no stylesheet links or imports, no CSS url(...).
        page = parse_page(raw)
        for tag, attrs in page.tags:
            for name in ("src", "href", "srcset", "action", "poster", "data", "background"):
                value = (attrs.get(name) or "").strip().lower()
                self.assertFalse(value.startswith(("http:", "https:", "//")),
                                 f"<{tag} {name}={value!r}> reaches outside the file")
            self.assertNotIn(tag, ("link", "iframe", "img", "object", "embed", "base"))
        for script in page.elements("script"):
            self.assertNotIn("src", script, "a script is loaded, not inlined")
        for style in page.styles:
            self.assertNotIn("url(", style)
            self.assertNotIn("@import", style)
        self.assertIsNone(re.search(r"""(?:src|href)\s*=\s*["']?\s*(?:https?:)?//""", raw, re.I))
        self.assertIn("Chart.js v", raw)  # the library itself, inlined

        dom = render(self, page_path, self.work)
        rendered = parse_page(dom)
        body = rendered.elements("body")[0]
        self.assertNotIn("data-chart-error", body, body.get("data-chart-error"))
        self.assertEqual(body.get("data-charts-drawn"), "5", body)
        self.assertEqual(body.get("data-inspected"), "5", body)
        canvases = {attrs.get("id"): attrs for attrs in rendered.elements("canvas")}
        self.assertEqual(sorted(canvases), sorted(CHART_IDS))
        for chart_id, attrs in canvases.items():
            self.assertEqual(attrs.get("data-drawn"), "yes", f"{chart_id} is blank: {attrs}")

        # The header against the plain replay.
        cells = rendered.text_by_id
        commits, events = stats_events(source)
        self.assertEqual(len(plain), commits)
        self.assertEqual(cells["summary-commits"], str(commits))
        self.assertEqual(cells["summary-events"], str(events))
        self.assertEqual(cells["summary-weight"], str(plain[-1]["weight"]))
        self.assertEqual(cells["summary-pairs"], str(plain[-1]["pairs"]))
        self.assertIn("advisory; working-time, safety and labour rules decide", cells["caution"])
        if journal:
            self.assertEqual(cells["summary-seqs"], f"{plain[0]['seq']} \u2013 {plain[-1]['seq']}")
            self.assertRegex(cells["summary-time"], r"^\d{4}-\d\d-\d\d \d\d:\d\d:\d\d UTC \u2013 ")
            self.assertIn("yoked data directory", cells["summary-source"])
            self.assertIn(source, cells["summary-source"])
        else:
            self.assertNotIn("summary-seqs", cells)
            self.assertEqual(cells["summary-source"], f"event script {source}")
        return cells

    def test_report_of_a_daemon_journal(self):
        daemon = Daemon(self).start()
        stream = gen_stream(os.path.join(daemon.dir, "stream.txt"), "dispatch", scaled(300, 100),
                            scaled(3000, 600), 10, seed=11)
        daemon.yoke("send", stream.path)
        final = daemon.summary()
        self.assertEqual(daemon.terminate(), 0, daemon.diagnostics())

        plain = replay_commits(daemon.data_dir)
        self.assertEqual((plain[-1]["seq"], plain[-1]["weight"], plain[-1]["pairs"]),
                         (final["seq"], final["weight"], final["pairs"]))
        page_path = os.path.join(self.work, "journal.html")
        with_report = run_yoke("replay", daemon.data_dir, "--report", page_path)
        # --report adds nothing to stdout (and no progress bar: stderr is a pipe).
        self.assertEqual(commit_lines(with_report.stdout),
                         commit_lines(run_yoke("replay", daemon.data_dir).stdout))
        self.assertEqual(with_report.stderr, "")
        cells = self.check_page(page_path, daemon.data_dir, plain, journal=True)
        self.assertIn("pool default", cells["summary-source"])
        self.assertEqual(cells["summary-weight"], str(final["weight"]))

    def test_report_of_a_script(self):
        stream = gen_stream(os.path.join(self.work, "shifts.txt"), "city", scaled(400, 120),
                            scaled(4000, 800), 25, seed=12)
        plain = replay_commits(stream.path)
        page_path = os.path.join(self.work, "script.html")
        run_yoke("replay", stream.path, "--report", page_path, "--verify")
        self.check_page(page_path, stream.path, plain, journal=False)

    def test_missing_chart_library_is_a_clear_error(self):
        stream = gen_stream(os.path.join(self.work, "small.txt"), "city", 50, 200, 10, seed=13)
        env = dict(os.environ, YOKE_CHART_JS=os.path.join(self.work, "no-such-chart.js"))
        result = subprocess.run([YOKE, "replay", stream.path, "--report",
                                 os.path.join(self.work, "x.html")],
                                capture_output=True, text=True, env=env, timeout=60 * SLOWDOWN)
        self.assertEqual(result.returncode, 2)
        self.assertIn("libjs-chart.js", result.stderr)


def run_on_pty(args, stdout_on_pty):
    """Runs `yoke ARGS` with stderr on a pseudo-terminal (and stdout too when asked, else a
    pipe); returns (exit status, what reached the terminal, stdout text)."""
    master, slave = pty.openpty()
    try:
        proc = subprocess.Popen([YOKE] + args, stdin=subprocess.DEVNULL,
                                stdout=slave if stdout_on_pty else subprocess.PIPE, stderr=slave)
    finally:
        os.close(slave)
    terminal = b""
    stdout = b""
    streams = [master] + ([] if stdout_on_pty else [proc.stdout.fileno()])
    try:
        while streams:
            ready, _, _ = select.select(streams, [], [], 1.0)
            for fd in ready:
                try:
                    chunk = os.read(fd, 65536)
                except OSError:  # EIO: the terminal's last writer is gone
                    chunk = b""
                if not chunk:
                    streams.remove(fd)
                elif fd == master:
                    terminal += chunk
                else:
                    stdout += chunk
            if not ready and proc.poll() is not None and master not in streams:
                break
        status = proc.wait(120 * SLOWDOWN)
    finally:
        os.close(master)
        if proc.stdout is not None:
            proc.stdout.close()
    return status, terminal.decode(errors="replace"), stdout.decode(errors="replace")


class ProgressBarTest(unittest.TestCase):
    """The bar needs a replay longer than its first 100 ms; this stream takes about a second."""

    @classmethod
    def setUpClass(cls):
        check_binaries()
        cls.work = tempfile.mkdtemp(prefix="yoke-progress-")
        cls.stream = gen_stream(os.path.join(cls.work, "long.txt"), "city", scaled(5000, 2000),
                                scaled(200000, 40000), 20, seed=14)

    @classmethod
    def tearDownClass(cls):
        shutil.rmtree(cls.work, ignore_errors=True)

    def test_draws_on_a_terminal_and_clears_itself(self):
        status, terminal, stdout = run_on_pty(["replay", self.stream.path], stdout_on_pty=False)
        self.assertEqual(status, 0, terminal)
        total = len(self.stream.batches)
        self.assertIn("replay [", terminal)
        self.assertRegex(terminal, rf"\d+/{total} commits")
        self.assertTrue(terminal.startswith("\r"), repr(terminal[:80]))
        self.assertTrue(terminal.endswith("\r\x1b[K"), repr(terminal[-80:]))  # cleared
        self.assertNotIn("\n", terminal)
        # stdout is untouched by it.
        self.assertEqual(len(commit_lines(stdout)), total)
        self.assertNotIn("\x1b", stdout)
        self.assertNotIn("\r", stdout)

    def test_quiet_when_stderr_is_not_a_terminal(self):
        result = run_yoke("replay", self.stream.path)
        self.assertEqual(result.stderr, "")
        self.assertNotIn("\x1b", result.stdout)
        self.assertEqual(len(commit_lines(result.stdout)), len(self.stream.batches))

    def test_quiet_when_stdout_is_the_terminal_too(self):
        # The commit lines show the progress there; a bar would tear them.
        status, terminal, _ = run_on_pty(["replay", self.stream.path], stdout_on_pty=True)
        self.assertEqual(status, 0)
        self.assertNotIn("replay [", terminal)
        self.assertNotIn("\x1b[K", terminal)
        self.assertIn("commit 1 weight", terminal)


if __name__ == "__main__":
    unittest.main()
