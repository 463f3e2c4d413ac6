"""The Debian packages CPack builds (packaging/CMakeLists.txt), inspected as an installer sees
them: `cpack -G DEB` into a temporary directory, then `dpkg-deb` for the fields, the files and
the maintainer scripts. The library dependencies are checked against the binaries themselves:
every shared library yoked or yoke needs (readelf's NEEDED) must come from a package named in
Depends. The yoked package is then unpacked into a temporary root, its binary run with its own
config file until it serves, and its unit checked by `systemd-analyze verify` and the offline
`systemd-analyze security` review (both skipped when systemd-analyze is missing), and its
sysusers file applied to the unpacked root by systemd-sysusers, as the postinst does.

Needs the built yoked and yoke (cpack installs them as they are); ~10 s."""

import glob
import os
import re
import shutil
import signal
import socket
import subprocess
import tempfile
import unittest
import urllib.request

from e2e_harness import (SLOWDOWN, IngestClient, ask, check_binaries, free_tcp_port,
                         make_batch_request, small_scale)

BUILD_DIR = os.environ.get("YOKE_BUILD_DIR", "")
CPACK = os.environ.get("YOKE_CPACK", "cpack")
VERSION = os.environ.get("YOKE_VERSION", "")
UNIT = "usr/lib/systemd/system/yoked.service"

YOKED_FILES = {
    "etc/yoke/yoked.toml",
    "usr/bin/yoked",
    UNIT,
    "usr/lib/sysusers.d/yoked.conf",
    "usr/share/doc/yoked/copyright",
    "usr/share/doc/yoked/yoked.example.toml",
    "usr/share/yoked/yoked-dashboard.json",
}
YOKE_FILES = {"usr/bin/yoke", "usr/share/doc/yoke/copyright"}


def run(*args, **kwargs):
    return subprocess.run([str(a) for a in args], capture_output=True, text=True, check=True,
                          timeout=120 * SLOWDOWN, **kwargs).stdout


def control_fields(deb):
    """dpkg-deb's control fields of a package, as {name: value} (continuation lines joined)."""
    fields, name = {}, None
    for line in run("dpkg-deb", "--field", deb).splitlines():
        if line.startswith(" ") and name:
            fields[name] += "\n" + line
        else:
            name, _, value = line.partition(": ")
            fields[name] = value
    return fields


def depends_packages(depends):
    """Package names in a Depends value: `libc6 (>= 2.34), passwd` -> {libc6, passwd}."""
    return {re.split(r"[ (]", alternative.strip())[0]
            for item in depends.split(",") for alternative in item.split("|")}


def files_in(deb):
    """(path, mode string, owner) of every regular file in a package."""
    entries = []
    for line in run("dpkg-deb", "--contents", deb).splitlines():
        mode, owner, _size, _date, _time, path = line.split(None, 5)
        if mode.startswith("-"):
            entries.append((path.removeprefix("./"), mode, owner))
    return entries


def needed_packages(binary):
    """The Debian packages holding the shared libraries a binary is linked against (NEEDED)."""
    dynamic = run("readelf", "--dynamic", binary)
    sonames = re.findall(r"\(NEEDED\)\s+Shared library: \[([^\]]+)\]", dynamic)
    cache = run("/sbin/ldconfig", "-p")
    packages = set()
    for soname in sonames:
        match = re.search(r"^\s*" + re.escape(soname) + r" \(libc6,x86-64[^)]*\) => (\S+)$", cache,
                          re.MULTILINE)
        if match is None:
            raise AssertionError(f"{soname} (needed by {binary}) is not in the linker cache")
        path = os.path.realpath(match[1])
        owners = None
        # usrmerge: dpkg may know the file under /lib or under /usr/lib.
        for candidate in (path, path.removeprefix("/usr"), "/usr" + path):
            result = subprocess.run(["dpkg-query", "--search", candidate], capture_output=True,
                                    text=True)
            if result.returncode == 0:
                owners = result.stdout.split(":", 1)[0]
                break
        if owners is None:
            raise AssertionError(f"no Debian package holds {path} ({soname})")
        packages.add(owners.split(",")[0].strip())
    return packages


def satisfied_by(package, depends):
    """Whether Depends names the package or a name it Provides (libspdlog1.10 provides
    libspdlog1.10-fmt9, the name its shlibs file gives)."""
    if package in depends:
        return True
    provides = run("dpkg-query", "--show", "--showformat=${Provides}", package)
    return bool(depends_packages(provides) & depends) if provides.strip() else False


def syscall_groups():
    """systemd's system-call groups, {"@name": [syscall or "@group", ...]}."""
    listing = run("systemd-analyze", "syscall-filter", "--no-pager")
    groups, current = {}, None
    for line in listing.splitlines():
        if line.startswith("@"):
            current = line.split()[0]
            groups[current] = []
        elif current and line.startswith("    ") and not line.strip().startswith("#"):
            groups[current].append(line.split()[0])
    return groups


def expand_syscalls(names, groups):
    found = set()
    for name in names:
        found |= expand_syscalls(groups.get(name, []), groups) if name.startswith("@") else {name}
    return found


def unit_syscall_filter(unit_text, groups):
    """The system calls a unit's SystemCallFilter= lines let through: the first allow list, less
    every `~` deny list (the unit uses no other form)."""
    allowed, denied = None, set()
    for line in unit_text.splitlines():
        if line.startswith("SystemCallFilter="):
            value = line.split("=", 1)[1]
            if value.startswith("~"):
                denied |= expand_syscalls(value[1:].split(), groups)
            else:
                allowed = (allowed or set()) | expand_syscalls(value.split(), groups)
    return allowed - denied


class PackagesTest(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        check_binaries()
        if not BUILD_DIR or not VERSION:
            raise unittest.SkipTest("YOKE_BUILD_DIR and YOKE_VERSION name the build tree")
        cls.work = tempfile.mkdtemp(prefix="yoke-packages-")
        run(CPACK, "-G", "DEB", "--config", os.path.join(BUILD_DIR, "CPackConfig.cmake"), "-B",
            cls.work)
        cls.debs = {}
        for deb in glob.glob(os.path.join(cls.work, "*.deb")):
            cls.debs[control_fields(deb)["Package"]] = deb

    @classmethod
    def tearDownClass(cls):
        if hasattr(cls, "work"):
            shutil.rmtree(cls.work, ignore_errors=True)

    def unpacked(self, package):
        root = tempfile.mkdtemp(prefix="root-", dir=self.work)
        run("dpkg-deb", "--extract", self.debs[package], root)
        return root

    def test_two_packages_named_and_versioned(self):
        self.assertEqual(set(self.debs), {"yoked", "yoke"})
        arch = run("dpkg", "--print-architecture").strip()
        for package, deb in self.debs.items():
            fields = control_fields(deb)
            self.assertEqual(fields["Version"], f"{VERSION}-1", package)
            self.assertEqual(fields["Architecture"], arch, package)
            self.assertEqual(os.path.basename(deb), f"{package}_{VERSION}-1_{arch}.deb")
            self.assertTrue(fields["Description"].strip(), package)
            self.assertIn("Maintainer", fields)

    def test_files_and_their_modes(self):
        for package, expected in (("yoked", YOKED_FILES), ("yoke", YOKE_FILES)):
            entries = files_in(self.debs[package])
            self.assertEqual({path for path, _, _ in entries}, expected, package)
            for path, mode, owner in entries:
                self.assertEqual(owner, "root/root", path)
                self.assertEqual(mode, "-rwxr-xr-x" if path.startswith("usr/bin/") else "-rw-r--r--",
                                 path)

    def test_depends_name_the_runtime_packages_of_the_binaries(self):
        for package, binary in (("yoked", os.environ["YOKED_BINARY"]),
                                ("yoke", os.environ["YOKE_BINARY"])):
            depends = depends_packages(control_fields(self.debs[package])["Depends"])
            needed = needed_packages(binary)
            self.assertIn("libzmq5", needed)  # the check itself found what it looks for
            missing = {name for name in needed if not satisfied_by(name, depends)}
            self.assertEqual(missing, set(), f"{package}: Depends {sorted(depends)}")
            self.assertFalse({name for name in depends if name.endswith("-dev")}, package)
        yoked_depends = depends_packages(control_fields(self.debs["yoked"])["Depends"])
        self.assertIn("passwd", yoked_depends)  # useradd, the postinst's fallback
        self.assertEqual(control_fields(self.debs["yoked"]).get("Recommends"), "yoke")

    def test_maintainer_scripts_and_conffiles(self):
        control = tempfile.mkdtemp(prefix="control-", dir=self.work)
        run("dpkg-deb", "--control", self.debs["yoked"], control)
        with open(os.path.join(control, "conffiles")) as conffiles:
            self.assertEqual(conffiles.read().split(), ["/etc/yoke/yoked.toml"])
        for script in ("postinst", "prerm", "postrm"):
            path = os.path.join(control, script)
            self.assertTrue(os.access(path, os.X_OK), script)
            run("sh", "-n", path)  # parses as a POSIX shell script
        with open(os.path.join(control, "postinst")) as postinst:
            self.assertIn("systemd-sysusers yoked.conf", postinst.read())
        root = self.unpacked("yoked")
        with open(os.path.join(root, "usr/lib/sysusers.d/yoked.conf")) as sysusers:
            user_lines = [line.split() for line in sysusers if line.startswith("u ")]
        self.assertEqual([fields[1] for fields in user_lines], ["_yoked"])
        with open(os.path.join(root, UNIT)) as unit:
            text = unit.read()
        for line in ("Type=notify", "User=_yoked", "StateDirectory=yoke", "ProtectSystem=strict",
                     "Restart=on-failure",
                     "ExecStart=/usr/bin/yoked --config /etc/yoke/yoked.toml --data-dir /var/lib/yoke"):
            self.assertIn(line + "\n", text)

    def test_unpacked_yoked_serves_with_its_packaged_config(self):
        root = self.unpacked("yoked")
        work = tempfile.mkdtemp(prefix="run-", dir=self.work)
        manager = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
        self.addCleanup(manager.close)
        manager.bind(os.path.join(work, "notify.sock"))
        manager.settimeout(30 * SLOWDOWN)
        query = "ipc://" + os.path.join(work, "query.sock")
        # The packaged config as it is; only the endpoints move off the well-known ports.
        proc = subprocess.Popen(
            [os.path.join(root, "usr/bin/yoked"), "--config", os.path.join(root, "etc/yoke/yoked.toml"),
             "--data-dir", os.path.join(work, "data"),
             "--ingest", "ipc://" + os.path.join(work, "ingest.sock"),
             "--publish", "ipc://" + os.path.join(work, "publish.sock"), "--query", query,
             "--metrics", f"127.0.0.1:{free_tcp_port()}"],
            env={**os.environ, "NOTIFY_SOCKET": os.path.join(work, "notify.sock")},
            stdin=subprocess.DEVNULL, stdout=subprocess.PIPE, stderr=subprocess.STDOUT)
        try:
            while b"READY=1" not in manager.recv(4096):
                pass
            health = ask(query, "health", timeout_ms=2000 * SLOWDOWN)
            self.assertTrue(health is not None and health.health.ok)
            self.assertEqual(health.health.daemon_version, VERSION)
            proc.send_signal(signal.SIGTERM)
            self.assertEqual(proc.wait(30 * SLOWDOWN), 0, proc.stdout.read().decode()[-3000:])
        finally:
            if proc.poll() is None:
                proc.kill()
                proc.wait()
            proc.stdout.close()
        yoke = self.unpacked("yoke")
        self.assertIn("yoke", run(os.path.join(yoke, "usr/bin/yoke"), "--help"))

    def test_sysusers_file_makes_the_service_user(self):
        """What the postinst runs, into the unpacked root instead of the host."""
        if shutil.which("systemd-sysusers") is None:
            self.skipTest("systemd-sysusers is not installed")
        root = self.unpacked("yoked")
        run("systemd-sysusers", f"--root={root}", "yoked.conf")
        with open(os.path.join(root, "etc/passwd")) as passwd:
            users = [line.strip().split(":") for line in passwd if line.strip()]
        self.assertEqual([(user[0], user[5], user[6]) for user in users],
                         [("_yoked", "/var/lib/yoke", "/usr/sbin/nologin")])
        self.assertLess(int(users[0][2]), 1000)  # a system account
        with open(os.path.join(root, "etc/group")) as group:
            self.assertEqual([line.split(":")[0] for line in group if line.strip()], ["_yoked"])

    def test_a_traced_run_stays_inside_the_units_syscall_filter(self):
        """The unpacked yoked under strace -f through start, batches (one refused), queries, a
        snapshot, a metrics scrape and SIGTERM: every system call it made must pass the unit's
        SystemCallFilter (a refused one would fail with EPERM, and ZeroMQ aborts on some), and
        none may need what MemoryDenyWriteExecute forbids. The local backend only: a cluster
        daemon's libnats calls are not traced here."""
        if small_scale():
            self.skipTest("the sanitizer runtime makes system calls of its own; the shipped "
                          "build is the Release one")
        for tool in ("strace", "systemd-analyze"):
            if shutil.which(tool) is None:
                self.skipTest(f"{tool} is not installed")
        root = self.unpacked("yoked")
        work = tempfile.mkdtemp(prefix="trace-", dir=self.work)
        trace = os.path.join(work, "trace")
        endpoint = {name: "ipc://" + os.path.join(work, name) for name in ("ingest", "publish", "query")}
        port = free_tcp_port()
        manager = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
        self.addCleanup(manager.close)
        manager.bind(os.path.join(work, "notify.sock"))
        manager.settimeout(60 * SLOWDOWN)
        tracer = subprocess.Popen(
            ["strace", "-f", "-qq", "-o", trace, os.path.join(root, "usr/bin/yoked"),
             "--config", os.path.join(root, "etc/yoke/yoked.toml"), "--data-dir",
             os.path.join(work, "data"), "--ingest", endpoint["ingest"], "--publish",
             endpoint["publish"], "--query", endpoint["query"], "--metrics", f"127.0.0.1:{port}"],
            env={**os.environ, "NOTIFY_SOCKET": os.path.join(work, "notify.sock")},
            stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        try:
            while b"READY=1" not in manager.recv(4096):
                pass
            client = IngestClient(endpoint["ingest"])
            for batch in range(1, 21):
                client.send(make_batch_request([("set", batch, batch + 100, 3)], pool="trace",
                                               client_id="trace", client_batch=batch))
            self.assertTrue(client.send(make_batch_request([("unset", 1, 2)], pool="trace"))
                            .HasField("rejected"))
            client.close()
            self.assertIsNotNone(ask(endpoint["query"], "summary", pool="trace"))
            self.assertIsNotNone(ask(endpoint["query"], "snapshot", timeout_ms=10000 * SLOWDOWN))
            with urllib.request.urlopen(f"http://127.0.0.1:{port}/metrics",
                                        timeout=10 * SLOWDOWN) as page:
                self.assertEqual(page.status, 200)
            # strace does not pass SIGTERM on: the daemon is the first process in the trace.
            with open(trace) as lines:
                daemon_pid = int(lines.readline().split()[0])
            os.kill(daemon_pid, signal.SIGTERM)
            self.assertEqual(tracer.wait(60 * SLOWDOWN), 0)
        finally:
            if tracer.poll() is None:
                tracer.kill()
                tracer.wait()
        with open(trace) as lines:
            calls = lines.read().splitlines()
        used = {match[1] for match in map(re.compile(r"^\d+ +([a-z_0-9]+)\(").match, calls)
                if match}
        # MemoryDenyWriteExecute=yes refuses memory both writable and executable, and making
        # memory executable after the fact.
        self.assertEqual([call for call in calls
                          if re.search(r" mprotect\(.*PROT_EXEC", call)
                          or re.search(r" mmap\(.*(PROT_WRITE\|PROT_EXEC|PROT_EXEC\|PROT_WRITE)",
                                       call)], [])
        used.discard("execve")  # strace's own exec of the daemon, before any filter would apply
        self.assertIn("fdatasync", used)  # the trace saw the journal's syncs
        with open(os.path.join(root, UNIT)) as unit:
            unit_text = unit.read()
        self.assertEqual(used - unit_syscall_filter(unit_text, syscall_groups()), set())
        # Every socket it opened is of a family RestrictAddressFamilies= lets through.
        families = set(re.findall(r" socket\((AF_[A-Z0-9]+)", "\n".join(calls)))
        permitted = set(re.search(r"^RestrictAddressFamilies=(.*)$", unit_text, re.M)[1].split())
        self.assertIn("AF_UNIX", families)
        self.assertLessEqual(families, permitted)

    def unit_root(self):
        """The unpacked yoked package plus the host's targets the unit's dependencies name."""
        if shutil.which("systemd-analyze") is None:
            self.skipTest("systemd-analyze is not installed")
        root = self.unpacked("yoked")
        for target in glob.glob("/lib/systemd/system/*.target"):
            shutil.copy(target, os.path.join(root, "usr/lib/systemd/system"))
        return root

    def test_unit_verifies_without_warnings(self):
        root = self.unit_root()
        result = subprocess.run(["systemd-analyze", "verify", f"--root={root}", "/" + UNIT],
                                capture_output=True, text=True, timeout=60)
        # verify exits 0 on an unknown key or a bad value too: its output must be empty.
        self.assertEqual((result.returncode, result.stdout + result.stderr), (0, ""))

    def test_unit_hardening_review(self):
        root = self.unit_root()
        result = subprocess.run(["systemd-analyze", "security", "--offline=yes", "--threshold=20",
                                 f"--root={root}", "/" + UNIT], capture_output=True, text=True,
                                timeout=60)
        exposure = re.search(r"Overall exposure level for yoked.service: ([0-9.]+)", result.stdout)
        print(f"systemd-analyze security: exposure {exposure[1] if exposure else '?'} (0 best, 10 worst)")
        # --threshold=20: exit status non-zero above an exposure of 2.0 ("OK" is below 3.0).
        self.assertEqual(result.returncode, 0, result.stdout[-3000:] + result.stderr)


if __name__ == "__main__":
    unittest.main()
