#!/usr/bin/env bash
# Assembles the file tree of the operator's image below OUT_DIR, for Jib to add over an empty base:
# a Java runtime cut by jlink to the modules JAR needs (/opt/java), the host's C libraries that
# runtime links against (the image has no distribution of its own), and a passwd/group naming the
# non-root user the image runs as. Usage: runtime.sh JAR OUT_DIR
set -euo pipefail

jar="$1"
out="$2"
java_home="${JAVA_HOME:-$(dirname "$(dirname "$(readlink -f "$(command -v java)")")")}"

# The non-root uid/gid the image and the chart's securityContext use (65532, the "nonroot" user of
# common minimal base images; common practice, not a standard).
uid=65532

rm -rf "$out"
mkdir -p "$out/opt" "$out/etc" "$out/tmp"

# jdeps finds the modules the classes name; service providers loaded by name it cannot see, so
# jdk.crypto.ec (elliptic-curve TLS keys, a separate module on Java 17) is added by hand.
modules="$("$java_home/bin/jdeps" --ignore-missing-deps --multi-release 17 --print-module-deps "$jar")"
modules="$modules,jdk.crypto.ec"
"$java_home/bin/jlink" --add-modules "$modules" --strip-debug --no-man-pages --no-header-files \
  --compress=2 --output "$out/opt/java"

# The C libraries of the launcher, the JVM and the runtime's native libraries, as the host's
# dynamic linker resolves them. java.desktop's graphics and sound libraries are left out: the
# operator only uses java.beans from that module and a headless JVM never loads them.
libraries() {
  ldd "$out/opt/java/bin/java"
  ldd "$out/opt/java/lib/server/libjvm.so"
  for lib in "$out"/opt/java/lib/*.so; do
    case "$(basename "$lib")" in
      libawt*|libfontmanager.so|libjavajpeg.so|libjawt.so|libjsound.so|liblcms.so|libmlib_image.so|libsplashscreen.so) ;;
      *) ldd "$lib" ;;
    esac
  done
}
for lib in $(libraries | grep -o '/[^ ]*\.so[^ ]*' | grep -v "^$out" | sort -u); do
  mkdir -p "$out$(dirname "$lib")"
  cp -L "$lib" "$out$lib"
done

printf 'root:x:0:0:root:/root:/sbin/nologin\nnonroot:x:%s:%s:nonroot:/home/nonroot:/sbin/nologin\n' \
  "$uid" "$uid" >"$out/etc/passwd"
printf 'root:x:0:\nnonroot:x:%s:\n' "$uid" >"$out/etc/group"
echo "image runtime: modules $modules, $(du -sh "$out" | cut -f1) in $out" >&2
