#!/usr/bin/env bash
# Development entry point: `./dev.sh demo` plans the bundled example, `./dev.sh test` runs every
# test (what CI runs), `./dev.sh bench` prints the engine's benchmark figures, `./dev.sh crds`
# copies the CRD the build generated from the Java types into crds/, `./dev.sh image` builds the
# operator's image as a tarball (no Docker engine needed), `./dev.sh lab` runs the benchmark lab of
# real applications (about an hour and a quarter) and writes docs/benchmarks.md's lab section,
# `./dev.sh scale` runs the operator at cluster scale (about 15 min).
set -euo pipefail
cd "$(dirname "$0")"

mvn_batch() {
  mvn -B -ntp "$@"
}

# Real-component tests start Debian's Prometheus server, and the control plane's scripts use
# openssl and curl; install whichever is missing, once.
need_packages() {
  local missing=()
  [ -x /usr/bin/prometheus ] || missing+=(prometheus)
  command -v openssl >/dev/null || missing+=(openssl)
  command -v curl >/dev/null || missing+=(curl)
  # The review page is tested in a real headless browser.
  [ -x /usr/bin/chromium ] || missing+=(chromium)
  if [ ${#missing[@]} -gt 0 ]; then
    echo "Installing Debian packages for the real-component tests: ${missing[*]}"
    local sudo=()
    [ "$(id -u)" -eq 0 ] || sudo=(sudo)
    "${sudo[@]}" apt-get update -qq
    DEBIAN_FRONTEND=noninteractive "${sudo[@]}" apt-get install -y -qq "${missing[@]}" >/dev/null
  fi
}

# The lab driver needs PyYAML and the plots matplotlib (with Pillow); they go into a virtual
# environment of their own, kept in the cache. Prints its folder.
plot_venv() {
  local venv="${HEAPHERD_CACHE:-$HOME/.cache/heapherd}/lab-venv"
  if [ ! -x "$venv/bin/python" ] || ! "$venv/bin/python" -c "import matplotlib, PIL, yaml" 2>/dev/null; then
    python3 -m venv "$venv" >&2
    "$venv/bin/pip" install -q matplotlib pillow pyyaml >&2
  fi
  echo "$venv"
}

case "${1:-}" in
  demo)
    mvn_batch -q -DskipTests -Dspotless.check.skip=true -Dimage.skip=true package
    java -jar operator/target/heapherd.jar plan \
      --pool docs/examples/pool.yaml --snapshot docs/examples/snapshot.yaml
    ;;
  test)
    need_packages
    # The real control plane (etcd, kube-apiserver, kube-controller-manager) is compiled from Go
    # modules once and cached by the hash of its go.sum; build.sh says how long it took.
    HEAPHERD_CONTROL_PLANE_BIN="$(e2e/control-plane/build.sh)"
    export HEAPHERD_CONTROL_PLANE_BIN
    mvn_batch verify
    ;;
  image)
    # A jlink'd runtime and the operator's classes, assembled by Jib into an OCI image tarball.
    mvn_batch -q -pl operator -am -DskipTests -Dspotless.check.skip=true package
    name="$(sed -n 's:.*<image.name>\(.*\)</image.name>.*:\1:p' operator/pom.xml)"
    echo "image $name written to operator/target/heapherd-image.tar"
    echo "load it into your registry, e.g. skopeo copy docker-archive:operator/target/heapherd-image.tar docker://registry.example.com/heapherd:${name##*:}"
    ;;
  crds)
    mvn_batch -q -pl operator -am -DskipTests -Dspotless.check.skip=true process-classes
    cp operator/target/classes/META-INF/fabric8/heappools.heapherd.dev-v1.yml crds/
    cp crds/heappools.heapherd.dev-v1.yml helm/heapherd/crds/
    echo "crds/ and helm/heapherd/crds/ updated"
    ;;
  lab)
    need_packages
    mvn_batch -q -DskipTests -Dspotless.check.skip=true -Dimage.skip=true package
    shift
    "$(plot_venv)/bin/python" e2e/lab/compare.py "$@"
    ;;
  plots)
    # The figures of docs/model.md, from the lab's results and the worked example.
    mvn_batch -q -DskipTests -Dspotless.check.skip=true -Dimage.skip=true package
    "$(plot_venv)/bin/python" docs/figures/model.py
    ;;
  scale)
    # The operator at 2,000 workloads and 10,000 pods, and at a tenth of that, on the real control
    # plane and Prometheus (about 15 min). The controller-manager leaves Deployments and
    # StatefulSets alone: the bench creates their Pod objects itself.
    need_packages
    HEAPHERD_CONTROL_PLANE_BIN="$(e2e/control-plane/build.sh)"
    export HEAPHERD_CONTROL_PLANE_BIN
    export HEAPHERD_CONTROLLERS='*,-deployment-controller,-statefulset-controller,-replicaset-controller'
    mvn_batch -q -pl e2e/scale -am -DskipTests -Dspotless.check.skip=true -Dimage.skip=true package
    java -Dheapherd.control-plane.dir=e2e/control-plane -jar e2e/scale/target/scale-bench.jar \
      docs/bench/scale.json operator/target/heapherd.jar crds/heappools.heapherd.dev-v1.yml
    "$(plot_venv)/bin/python" docs/figures/scale.py
    ;;
  bench)
    mvn_batch -q -Pbench -pl operator -am -DskipTests -Dspotless.check.skip=true -Dimage.skip=true verify
    ;;
  *)
    echo "usage: ./dev.sh demo|test|bench|scale|crds|image|lab|plots" >&2
    exit 2
    ;;
esac
