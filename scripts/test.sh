#!/usr/bin/env bash
# The one test command: system packages the integration tests need, dependencies, type check, tests.
# Integration tests start real mosquitto, victoria-metrics (and its vmagent), etcd and nats-server
# servers (Debian packages) on loopback.
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."

have() { # have <binary> <absolute path>: on PATH, or at the Debian package's path (/usr/sbin is often off PATH)
  command -v "$1" >/dev/null 2>&1 || [ -x "$2" ]
}

missing=()
have mosquitto /usr/sbin/mosquitto || missing+=(mosquitto)
have victoria-metrics /usr/bin/victoria-metrics || missing+=(victoria-metrics)
have chromium /usr/bin/chromium || missing+=(chromium) # browser tests: the report in a real page, and its PDF
have etcd /usr/bin/etcd || missing+=(etcd-server)        # scale-out: work units held by etcd lease
have nats-server /usr/sbin/nats-server || missing+=(nats-server) # scale-out: a clustered MQTT broker

if [ "${#missing[@]}" -gt 0 ]; then
  if [ "$(id -u)" = "0" ]; then
    echo "test.sh: installing ${missing[*]}"
    apt-get update
    DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends "${missing[@]}"
  else
    echo "test.sh: missing system packages: ${missing[*]}" >&2
    echo "Run as root, then run this script again:" >&2
    echo "  apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends ${missing[*]}" >&2
    exit 1
  fi
fi

npm ci
npx tsc --noEmit -p .
# bin/strainward.mjs runs dist/ when it is fresh: the commands the tests start as processes run the shipped build.
npm run build
npx vitest run
# The fault proof: the live job through processor, broker, database and disk faults, counted (needs root: tmpfs).
npm run test:faults
