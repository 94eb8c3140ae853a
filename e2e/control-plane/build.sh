#!/usr/bin/env bash
# Builds etcd, kube-apiserver, kube-controller-manager and kubectl from Go modules into a cache
# folder keyed by this module's content, and prints that bin folder as the last stdout line.
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
binaries=(etcd kube-apiserver kube-controller-manager kubectl loopback-ports)

command -v go >/dev/null || { echo "build.sh: go not found on PATH" >&2; exit 1; }
cd "$here"

# Key on the dependency set and our own mains, so any change to either gives a fresh folder.
key="$( { cat go.mod go.sum; find cmd -name '*.go' -print0 | LC_ALL=C sort -z | xargs -0 cat; } | sha256sum | cut -c1-12)"
bin="${HEAPHERD_CACHE:-$HOME/.cache/heapherd}/control-plane/$key/bin"

cached=true
for b in "${binaries[@]}"; do
  [[ -x "$bin/$b" ]] || cached=false
done
if $cached; then
  echo "control plane cached at $bin" >&2
  echo "$bin"
  exit 0
fi

# The module zips carry no version stamp; without one the servers report v0.0.0 and kubectl
# warns about version skew, so stamp the version that go.mod resolves.
version="$(go list -m -f '{{.Version}}' k8s.io/kubernetes)"
[[ "$version" =~ ^v([0-9]+)\.([0-9]+)\. ]] || { echo "build.sh: unexpected k8s.io/kubernetes version '$version'" >&2; exit 1; }
ldflags="-s -w"
built="$(date -u +%Y-%m-%dT%H:%M:%SZ)"
for pkg in k8s.io/component-base/version k8s.io/client-go/pkg/version; do
  ldflags+=" -X $pkg.gitVersion=$version -X $pkg.gitMajor=${BASH_REMATCH[1]} -X $pkg.gitMinor=${BASH_REMATCH[2]}"
  ldflags+=" -X $pkg.gitCommit= -X $pkg.gitTreeState=clean -X $pkg.buildDate=$built"
done

echo "building control plane $version into $bin (about 10 min on 2 cores when nothing is cached)" >&2
staging="$(dirname "$bin")/bin.partial.$$"
rm -rf "$staging"
mkdir -p "$staging"
trap 'rm -rf "$staging"' EXIT
start=$SECONDS
# No VCS stamp: the cache key already names the inputs, and stamping fails in some checkouts.
CGO_ENABLED=0 go build -trimpath -buildvcs=false -ldflags="$ldflags" -o "$staging/" tool ./cmd/...
# Publish whole: a folder that exists under the key always holds a complete build.
rm -rf "$bin"
mv -T "$staging" "$bin"
echo "control plane built in $((SECONDS - start)) s" >&2
echo "$bin"
