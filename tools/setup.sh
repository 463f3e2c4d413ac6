#!/usr/bin/env bash
# Installs every Debian package that building, testing and benchmarking yoke needs.
# Safe to run again; skips apt when everything is already there.
set -euo pipefail

packages=(
  build-essential cmake ninja-build pkg-config
  libgtest-dev libgmock-dev libbenchmark-dev
  libcli11-dev nlohmann-json3-dev
  liblemon-dev                      # test and benchmark oracle only
  python3 python3-networkx python3-scipy python3-numpy   # test oracles
  # yoked, the daemon: sockets, messages, event loop, logging, config
  libzmq3-dev cppzmq-dev libprotobuf-dev protobuf-compiler
  libboost-dev libspdlog-dev libtomlplusplus-dev
  python3-protobuf python3-zmq      # the Python client and the daemon's tests
  python3-venv python3-pip python3-setuptools  # service.pip_client: the client pip-installed into a venv
  dpkg-dev                          # cpack's dpkg-shlibdeps: the Debian packages' dependencies
  strace                            # service.packages: a traced yoked against the unit's system-call filter
  clang                             # the libFuzzer target of the message decoder
  libjs-chart.js chromium fonts-liberation  # replay --report: charts; its browser test (fonts: only recommended)
  nats-server libnats-dev           # the JetStream backend (daemon/cluster), its test clusters, the cluster demo
)

missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done

if ((${#missing[@]})); then
  echo "setup: installing ${missing[*]}"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq --no-install-recommends "${missing[@]}"
fi
