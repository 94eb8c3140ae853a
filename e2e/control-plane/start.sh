#!/usr/bin/env bash
# Starts etcd, kube-apiserver and kube-controller-manager on 127.0.0.1 with fresh certificates
# and data under STATE_DIR, waits until the cluster can take pods, and prints the admin
# kubeconfig path as the last stdout line. stop.sh STATE_DIR ends it.
#
# The binaries come from build.sh, or from HEAPHERD_CONTROL_PLANE_BIN when set.
# HEAPHERD_CONTROLLERS replaces the controller-manager's --controllers list (default "*"), e.g. to
# leave Deployments and StatefulSets to a test that creates their pods itself.
set -euo pipefail

die() { echo "start.sh: $*" >&2; exit 1; }

[[ $# -eq 1 ]] || die "usage: start.sh STATE_DIR"
here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
mkdir -p "$1"
state="$(cd "$1" && pwd)"
pki="$state/pki"
logs="$state/logs"

for tool in openssl curl base64; do
  command -v "$tool" >/dev/null || die "$tool not found on PATH"
done
# alive PID: running and not a zombie (our exited children stay zombies until we exit).
alive() {
  local stat
  stat="$(ps -o stat= -p "$1")" && [[ "$stat" != Z* ]]
}
if [[ -s "$state/pids" ]]; then
  while read -r pid; do
    alive "$pid" && die "a control plane may still be running in $state; run stop.sh $state first"
  done <"$state/pids"
fi

bin="${HEAPHERD_CONTROL_PLANE_BIN:-$("$here/build.sh" | tail -n 1)}"
for b in etcd kube-apiserver kube-controller-manager loopback-ports; do
  [[ -x "$bin/$b" ]] || die "$bin/$b missing; run build.sh"
done

# Only our own entries are cleared: STATE_DIR may be a folder the caller shares with other files.
rm -rf "$pki" "$logs" "$state/etcd" "$state/kubeconfig" "$state/pids"
mkdir -p "$pki" "$logs"
started=$SECONDS

# --- certificates -------------------------------------------------------------------------
# RSA throughout: Java clients (Fabric8) read RSA client keys from a kubeconfig without extra
# providers.
cat >"$pki/openssl.cnf" <<'EOF'
[req]
distinguished_name = dn
prompt = no
[dn]
[ca]
basicConstraints = critical, CA:TRUE
keyUsage = critical, keyCertSign, cRLSign
subjectKeyIdentifier = hash
[server]
basicConstraints = critical, CA:FALSE
keyUsage = critical, digitalSignature, keyEncipherment
extendedKeyUsage = serverAuth
subjectAltName = IP:127.0.0.1, DNS:localhost, IP:10.96.0.1, DNS:kubernetes, DNS:kubernetes.default, DNS:kubernetes.default.svc, DNS:kubernetes.default.svc.cluster.local
[client]
basicConstraints = critical, CA:FALSE
keyUsage = critical, digitalSignature, keyEncipherment
extendedKeyUsage = clientAuth
EOF
new_key() { openssl genpkey -algorithm RSA -pkeyopt rsa_keygen_bits:2048 -out "$pki/$1.key" 2>/dev/null; }
# issue NAME SUBJECT SECTION: a certificate for NAME.key signed by the CA.
issue() {
  new_key "$1"
  openssl req -new -config "$pki/openssl.cnf" -key "$pki/$1.key" -subj "$2" -out "$pki/$1.csr"
  openssl x509 -req -in "$pki/$1.csr" -CA "$pki/ca.crt" -CAkey "$pki/ca.key" \
    -set_serial "0x$(openssl rand -hex 16)" -days 365 -sha256 \
    -extfile "$pki/openssl.cnf" -extensions "$3" -out "$pki/$1.crt" 2>/dev/null
  rm "$pki/$1.csr"
}
new_key ca
openssl req -x509 -new -config "$pki/openssl.cnf" -key "$pki/ca.key" -subj "/CN=heapherd-control-plane-ca" \
  -extensions ca -days 365 -sha256 -out "$pki/ca.crt"
issue apiserver "/CN=kube-apiserver" server
issue admin "/O=system:masters/CN=heapherd-admin" client
new_key service-account
openssl pkey -in "$pki/service-account.key" -pubout -out "$pki/service-account.pub"

# --- ports and kubeconfig -------------------------------------------------------------------
mapfile -t ports < <("$bin/loopback-ports" -n 4)
etcd_port=${ports[0]} etcd_peer_port=${ports[1]} api_port=${ports[2]} kcm_port=${ports[3]}
server="https://127.0.0.1:$api_port"
b64() { base64 -w0 <"$pki/$1"; }
cat >"$state/kubeconfig" <<EOF
apiVersion: v1
kind: Config
clusters:
- name: heapherd
  cluster:
    server: $server
    certificate-authority-data: $(b64 ca.crt)
users:
- name: heapherd-admin
  user:
    client-certificate-data: $(b64 admin.crt)
    client-key-data: $(b64 admin.key)
contexts:
- name: heapherd
  context:
    cluster: heapherd
    user: heapherd-admin
current-context: heapherd
EOF
chmod 600 "$state/kubeconfig"

# --- processes ------------------------------------------------------------------------------
# On any failure or interruption below, stop what did start and show the end of the logs.
ready=false
clean_up_unless_ready() {
  $ready && return
  echo "start.sh: control plane did not start; last log lines:" >&2
  for f in "$logs"/*.log; do
    [[ -f "$f" ]] && { echo "--- $f" >&2; tail -n 15 "$f" >&2; }
  done
  "$here/stop.sh" "$state" >&2 || true
}
trap clean_up_unless_ready EXIT

# launch NAME ARGS...: start a binary in the background, stdio detached so callers that read
# our output are not held open, and record its pid at once so stop.sh can always clean up.
launch() {
  local name=$1
  shift
  "$bin/$name" "$@" </dev/null >"$logs/$name.log" 2>&1 &
  echo $! >>"$state/pids"
}
# await WHAT URL [CURL_ARGS...]: poll until URL answers 2xx, failing after 60 s or as soon
# as any recorded process has exited.
await() {
  local what=$1 url=$2
  shift 2
  local deadline=$((SECONDS + 60))
  until curl -fsS -o /dev/null --max-time 2 "$@" "$url" 2>/dev/null; do
    while read -r pid; do
      alive "$pid" || { echo "start.sh: process $pid exited while waiting for $what" >&2; return 1; }
    done <"$state/pids"
    ((SECONDS < deadline)) || { echo "start.sh: $what not ready within 60 s" >&2; return 1; }
    sleep 0.3
  done
}
admin=(--cacert "$pki/ca.crt" --cert "$pki/admin.crt" --key "$pki/admin.key")

# No fsync: the data lives only as long as one test run.
etcd_url="http://127.0.0.1:$etcd_port" etcd_peer_url="http://127.0.0.1:$etcd_peer_port"
launch etcd --name heapherd --data-dir "$state/etcd" \
  --listen-client-urls "$etcd_url" --advertise-client-urls "$etcd_url" \
  --listen-peer-urls "$etcd_peer_url" --initial-advertise-peer-urls "$etcd_peer_url" \
  --initial-cluster "heapherd=$etcd_peer_url" \
  --unsafe-no-fsync
await etcd "$etcd_url/health"

# The lease endpoint reconciler would try to publish 127.0.0.1 as the endpoint of the
# "kubernetes" service, which validation rejects (loopback), logging an error every 10 s. With
# "none" the apiserver logs one misleading "Found stale data" error at start instead.
launch kube-apiserver \
  --etcd-servers "$etcd_url" \
  --bind-address 127.0.0.1 --advertise-address 127.0.0.1 --secure-port "$api_port" \
  --tls-cert-file "$pki/apiserver.crt" --tls-private-key-file "$pki/apiserver.key" \
  --client-ca-file "$pki/ca.crt" \
  --authorization-mode Node,RBAC \
  --service-cluster-ip-range 10.96.0.0/16 \
  --service-account-issuer https://kubernetes.default.svc.cluster.local \
  --service-account-key-file "$pki/service-account.pub" \
  --service-account-signing-key-file "$pki/service-account.key" \
  --endpoint-reconciler-type none
await kube-apiserver "$server/readyz" "${admin[@]}"

# Callers of its secure port are checked against our CA directly: looking the CA up in the
# cluster would also expect front-proxy settings, which this control plane has no use for.
launch kube-controller-manager \
  --kubeconfig "$state/kubeconfig" \
  --client-ca-file "$pki/ca.crt" --authentication-skip-lookup \
  --authorization-kubeconfig "$state/kubeconfig" \
  --bind-address 127.0.0.1 --secure-port "$kcm_port" \
  --leader-elect=false \
  --use-service-account-credentials=false \
  --service-account-private-key-file "$pki/service-account.key" \
  --root-ca-file "$pki/ca.crt" \
  --cluster-signing-cert-file "$pki/ca.crt" --cluster-signing-key-file "$pki/ca.key" \
  --controllers "${HEAPHERD_CONTROLLERS:-*}"
# Its serving certificate is self-signed in memory; /healthz needs no client identity.
await kube-controller-manager "https://127.0.0.1:$kcm_port/healthz" --insecure
# Pods are rejected until their namespace's "default" service account exists, so wait for the
# controller manager to have made the first one.
await "service account default/default" "$server/api/v1/namespaces/default/serviceaccounts/default" "${admin[@]}"

ready=true
echo "control plane ready at $server in $((SECONDS - started)) s (logs in $logs)" >&2
echo "$state/kubeconfig"
