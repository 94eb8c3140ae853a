#!/usr/bin/env bash
# Development entry point: `./dev.sh demo` plans the bundled example, `./dev.sh test` runs every
# test (what CI runs), `./dev.sh bench` prints the engine's benchmark figures.
set -euo pipefail
cd "$(dirname "$0")"

mvn_batch() {
  mvn -B -ntp "$@"
}

case "${1:-}" in
  demo)
    mvn_batch -q -DskipTests -Dspotless.check.skip=true package
    java -jar operator/target/heapherd.jar plan \
      --pool docs/examples/pool.yaml --snapshot docs/examples/snapshot.yaml
    ;;
  test)
    mvn_batch verify
    ;;
  bench)
    mvn_batch -q -Pbench -pl operator -DskipTests -Dspotless.check.skip=true verify
    ;;
  *)
    echo "usage: ./dev.sh demo|test|bench" >&2
    exit 2
    ;;
esac
