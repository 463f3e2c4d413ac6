"""The Python client installed with pip into a virtual environment, without the network: a venv
on Debian's python3 (with its site packages, which hold pip, pyzmq and protobuf), `pip install
--no-index --no-build-isolation` of the staged tree (tools/python/pyproject.toml: yoke_client
and the generated yoke.v1 modules), then a script run by the venv's interpreter alone (no
PYTHONPATH, from a directory outside the source tree) that talks to a real yoked."""

import json
import os
import shutil
import subprocess
import tempfile
import textwrap
import unittest

from e2e_harness import SLOWDOWN, Daemon, check_binaries

PACKAGE_DIR = os.environ.get("YOKE_PYTHON_PACKAGE_DIR", "")
VERSION = os.environ.get("YOKE_VERSION", "")

CLIENT_SCRIPT = textwrap.dedent("""
    import json, sys
    import yoke_client, yoke.v1.query_pb2
    from yoke_client import Query, Sender, Watcher, add_vertex, remove_vertex, set_edge

    ingest, publish, query = sys.argv[1:4]
    sender = Sender(ingest, pool="canal")
    seqs = sender.send_all([[set_edge(1, 2, 5), set_edge(2, 3, 7), set_edge(3, 4, 6)]])
    watcher = Watcher(publish, "canal", query_endpoint=query).catch_up()
    first_weight = watcher.weight
    seqs += sender.send_all([[remove_vertex(3), set_edge(4, 5, 2)], [add_vertex(9)]])
    caught_up = watcher.wait_for_seq(seqs[-1], timeout_s=20)
    print(json.dumps({"seqs": seqs, "summary": Query(query).summary("canal"),
                      "first_weight": first_weight, "caught_up": caught_up,
                      "watched": [watcher.seq, watcher.weight],
                      "client_file": yoke_client.__file__,
                      "messages_file": yoke.v1.query_pb2.__file__}))
""")


class PipClientTest(unittest.TestCase):
    def setUp(self):
        check_binaries()
        if not PACKAGE_DIR or not os.path.isfile(os.path.join(PACKAGE_DIR, "pyproject.toml")):
            self.skipTest("YOKE_PYTHON_PACKAGE_DIR names no staged tree (build yoke_python_package)")
        self.work = tempfile.mkdtemp(prefix="yoke-pip-")
        self.addCleanup(shutil.rmtree, self.work, ignore_errors=True)

    def run_checked(self, *args, cwd=None):
        result = subprocess.run(list(args), capture_output=True, text=True, cwd=cwd,
                                timeout=180 * SLOWDOWN,
                                env={k: v for k, v in os.environ.items()
                                     if k not in ("PYTHONPATH", "PIP_INDEX_URL")})
        self.assertEqual(result.returncode, 0,
                         f"{' '.join(args)}\n{result.stdout[-3000:]}\n{result.stderr[-3000:]}")
        return result.stdout

    def test_installed_client_talks_to_yoked(self):
        venv = os.path.join(self.work, "venv")
        # --without-pip: the venv runs Debian's pip from the system site packages (ensurepip
        # would copy a pip into it, ~15 s on a loaded machine); it installs into the venv.
        self.run_checked("/usr/bin/python3", "-m", "venv", "--system-site-packages", "--without-pip",
                         venv)
        python = os.path.join(venv, "bin", "python")
        # A copy, so that setuptools' in-tree build files stay out of the build tree.
        source = shutil.copytree(PACKAGE_DIR, os.path.join(self.work, "yoke-client"))
        self.run_checked(python, "-m", "pip", "install", "--no-index", "--no-build-isolation",
                         "--disable-pip-version-check", source)
        shown = self.run_checked(python, "-m", "pip", "show", "--files", "yoke-client")
        self.assertIn(f"Version: {VERSION}", shown)
        for packaged in ("yoke_client/sender.py", "yoke/v1/ingest_pb2.py", "yoke/v1/query_pb2.py"):
            self.assertIn(packaged, shown)
        # pip resolved the dependencies from Debian's packages without the network.
        self.assertIn("Requires: protobuf, pyzmq", shown)

        daemon = Daemon(self).start()
        script = os.path.join(self.work, "client.py")
        with open(script, "w") as out:
            out.write(CLIENT_SCRIPT)
        result = json.loads(self.run_checked(python, script, daemon.ingest, daemon.publish,
                                             daemon.query, cwd=self.work))
        self.assertEqual(result["seqs"], [1, 2, 3])
        self.assertEqual(result["summary"]["seq"], 3)
        # Optimum by enumeration (common knowledge): {1,2} + {3,4} = 11 on the path 1-2-3-4;
        # with 3 gone, {1,2} + {4,5} = 7.
        self.assertEqual(result["first_weight"], 11)
        self.assertEqual(result["summary"]["weight"], 7)
        self.assertTrue(result["caught_up"])
        self.assertEqual(result["watched"], [3, 7])
        for key in ("client_file", "messages_file"):
            self.assertTrue(result[key].startswith(venv), result[key])


if __name__ == "__main__":
    unittest.main()
