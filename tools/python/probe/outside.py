"""What the third pass of the probe adds to the harness: the spec line a case relies on, found
by its words (so a citation names the line the text is on today), the `yoke` command line run
as a child, free ports, and the Prometheus text page parsed.

Written from docs/, README.md, `yoke ... --help`, daemon/yoked.example.toml and proto/ only."""

import os
import re
import subprocess
import tempfile
import urllib.error
import urllib.request

from harness import free_ports

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", "..", ".."))


def spec(path, words):
    """'path:LINE "words"' for the first line of `path` (from the repository root) holding
    `words` (blanks collapsed, so a phrase may cross a line break); the phrase alone when the
    file no longer says it (the citation then shows that it went stale)."""
    try:
        with open(os.path.join(ROOT, path)) as f:
            lines = f.read().split("\n")
    except OSError:
        return f'{path} "{words}" (file not found)'
    flat, starts = "", []
    for i, line in enumerate(lines):
        starts.append(len(flat))
        words_of_line = line.split()
        if words_of_line and words_of_line[0] in ("#", "//"):  # a comment's marker
            words_of_line = words_of_line[1:]
        flat += " ".join(words_of_line) + " "
    at = flat.find(" ".join(words.split()))
    if at < 0:
        return f'{path} "{words}" (not found: stale citation)'
    line = max(i for i, s in enumerate(starts) if s <= at) + 1
    return f'{path}:{line} "{words}"'


def helps(words):
    """A citation of a command's own help (`yoke CMD --help`), which documents its outputs."""
    return f'yoke --help text: "{words}"'


class Ran:
    """One finished child: exit status, stdout, stderr."""

    def __init__(self, code, out, err):
        self.code, self.out, self.err = code, out, err

    def short(self, n=160):
        err = " ".join(self.err.split())[:n]
        out = " ".join(self.out.split())[:n]
        return f"exit {self.code}, stdout {out!r}, stderr {err!r}"


def run(argv, timeout=30, stdin=None):
    try:
        p = subprocess.run(argv, capture_output=True, text=True, timeout=timeout, input=stdin)
        return Ran(p.returncode, p.stdout, p.stderr)
    except subprocess.TimeoutExpired as e:
        return Ran(None, str(e.stdout or ""), f"timed out after {timeout} s")


def dead_endpoint():
    """A tcp endpoint on loopback where nothing listens (a port just freed)."""
    return f"tcp://127.0.0.1:{free_ports(1)[0]}"


def scratch_file(text, suffix=".txt"):
    """`text` in a new temporary file, written as is (no newline translation)."""
    fd, path = tempfile.mkstemp(prefix="yoke-probe3-", suffix=suffix)
    with os.fdopen(fd, "w", newline="") as f:
        f.write(text)
    return path


# --- the metrics page -----------------------------------------------------------------------

SAMPLE = re.compile(r'^([a-zA-Z_:][a-zA-Z0-9_:]*)(\{(.*)\})?\s+(\S+)(\s+\d+)?$')
LABEL = re.compile(r'([a-zA-Z_][a-zA-Z0-9_]*)="((?:[^"\\]|\\.)*)"\s*(,|$)')


def http_get(url, timeout=3.0, method="GET"):
    """(status, body text); status None with the exception's text when nothing answered."""
    try:
        req = urllib.request.Request(url, method=method)
        with urllib.request.urlopen(req, timeout=timeout) as r:
            return r.status, r.read().decode(errors="replace")
    except urllib.error.HTTPError as e:
        return e.code, e.read().decode(errors="replace")
    except Exception as e:  # noqa: BLE001 - a refused connection is an observation
        return None, repr(e)


def parse_labels(text):
    out, pos = {}, 0
    text = text.strip()
    while pos < len(text):
        m = LABEL.match(text, pos)
        if not m:
            raise ValueError(f"bad labels {text!r}")
        out[m.group(1)] = m.group(2)
        pos = m.end()
        while pos < len(text) and text[pos] == " ":
            pos += 1
    return out


class Page:
    """A /metrics page: samples {(name, frozenset(labels)): value}, the TYPE of each family,
    and the lines that are not the text format."""

    def __init__(self, text):
        self.samples, self.types, self.bad, self.dupes = {}, {}, [], []
        for line in text.split("\n"):
            if not line.strip():
                continue
            if line.startswith("#"):
                parts = line.split(None, 3)
                if len(parts) >= 4 and parts[1] == "TYPE":
                    self.types[parts[2]] = parts[3].strip()
                continue
            m = SAMPLE.match(line)
            if not m:
                self.bad.append(line)
                continue
            try:
                labels = parse_labels(m.group(3) or "")
                value = float(m.group(4))
            except ValueError:
                self.bad.append(line)
                continue
            key = (m.group(1), frozenset(labels.items()))
            if key in self.samples:
                self.dupes.append(line)
            self.samples[key] = value

    def family_of(self, name):
        """The family a sample belongs to (histogram and summary samples carry suffixes)."""
        if name in self.types:
            return name
        for suffix in ("_bucket", "_sum", "_count", "_total", "_created"):
            if name.endswith(suffix) and name[:-len(suffix)] in self.types:
                return name[:-len(suffix)]
        return None

    def get(self, name, **labels):
        """The sample of `name` whose labels include `labels` (the sum when several do)."""
        want = set(labels.items())
        vals = [v for (n, ls), v in self.samples.items() if n == name and want <= set(ls)]
        return sum(vals) if vals else None

    def series(self, name):
        return {ls: v for (n, ls), v in self.samples.items() if n == name}
