#!/usr/bin/env bash
# check.sh builds plumb's container image offline (internal/container/
# Containerfile, FROM scratch, from a static binary built here) with Debian's
# podman and checks it:
#   - the image exists, its entrypoint, user, working directory and OCI
#     labels are as the Containerfile declares, and its files are only the
#     binary (mode 0555) and /data (owned by the image's user);
#   - the binary copied out of it (podman create + podman cp) is the one
#     built, prints the stamped version and runs a tiny `plumb embed` here;
#   - where this machine lets podman run containers, the same embed inside
#     the container on a mounted data directory (skipped, and said so, where
#     the sandbox refuses to run one).
#
#   internal/scripts/container/check.sh
#
# Env: PLUMB_VERSION (default: cmd/plumb's version + the commit, e.g.
# 0.2.0-dev+9f59539ab12c); PLUMB_IMAGE_KEEP=1 builds into podman's usual
# store and keeps the image (default: a private store under a temporary
# directory, removed at exit). podman comes from Debian's package
# (apt-get install podman, as root, when missing); no base image is pulled.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
export PATH="/usr/local/go/bin:$PATH"
if ! command -v podman >/dev/null 2>&1; then
	if [ "$(id -u)" = 0 ]; then
		apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq podman >/dev/null
	else
		echo "check.sh: podman missing; install Debian's podman package" >&2
		exit 2
	fi
fi
work="$(mktemp -d)"
cid=""
pm=(podman)
if [ "${PLUMB_IMAGE_KEEP:-}" != 1 ]; then
	pm=(podman --root "$work/store" --runroot "$work/run")
fi
cleanup() {
	if [ -n "$cid" ]; then "${pm[@]}" rm -f "$cid" >/dev/null 2>&1 || true; fi
	if [ "${PLUMB_IMAGE_KEEP:-}" != 1 ]; then
		"${pm[@]}" rmi -a -f >/dev/null 2>&1 || true
	fi
	rm -rf "$work"
}
trap cleanup EXIT
fail() { echo "check.sh: FAIL: $*" >&2; exit 1; }

base="$(sed -n 's/^var version = "\(.*\)"$/\1/p' "$root/cmd/plumb/main.go")"
[ -n "$base" ] || fail "no version found in cmd/plumb/main.go"
rev="$(git -C "$root" rev-parse HEAD 2>/dev/null || echo unknown)"
if [ -n "${PLUMB_VERSION:-}" ]; then
	version="$PLUMB_VERSION"
elif [ "$rev" != unknown ]; then
	version="$base+${rev:0:12}"
else
	version="$base"
fi
tag="${version//+/-}" # an image tag has no '+'
image="localhost/plumb:$tag"

t0=$(date +%s)
# Step 1: the static binary, into a build context of its own.
mkdir -p "$work/ctx/data"
(cd "$root" && CGO_ENABLED=0 go build -trimpath -ldflags "-s -w -X main.version=$version" -o "$work/ctx/plumb" ./cmd/plumb)
t1=$(date +%s)
# Step 2: the image, FROM scratch: nothing is pulled.
if ! "${pm[@]}" build --pull=never -f "$root/internal/container/Containerfile" \
	--build-arg VERSION="$version" --build-arg REVISION="$rev" \
	-t "$image" "$work/ctx" >"$work/build.log" 2>&1; then
	cat "$work/build.log" >&2
	fail "podman build failed"
fi
t2=$(date +%s)
echo "== build log (last lines)"
tail -n 6 "$work/build.log"

echo "== image"
"${pm[@]}" image exists "$image" || fail "$image not in the store after the build"
inspect() { "${pm[@]}" image inspect --format "$1" "$image"; }
want() { # name got want
	if [ "$2" != "$3" ]; then fail "$1: got $2, want $3"; fi
	echo "ok  $1 = $2"
}
want entrypoint "$(inspect '{{json .Config.Entrypoint}}')" '["/usr/local/bin/plumb"]'
want cmd "$(inspect '{{json .Config.Cmd}}')" '["--help"]'
want user "$(inspect '{{.Config.User}}')" "65532:65532"
want workdir "$(inspect '{{.Config.WorkingDir}}')" "/data"
want label.version "$(inspect '{{index .Config.Labels "org.opencontainers.image.version"}}')" "$version"
want label.revision "$(inspect '{{index .Config.Labels "org.opencontainers.image.revision"}}')" "$rev"
for l in source licenses title; do
	v="$(inspect "{{index .Config.Labels \"org.opencontainers.image.$l\"}}")"
	[ -n "$v" ] && [ "$v" != "<no value>" ] || fail "label org.opencontainers.image.$l missing"
	echo "ok  label.$l = $v"
done
size="$(inspect '{{.Size}}')"
echo "ok  size = $size bytes ($(( (size + 524288) / 1048576 )) MiB); binary $(stat -c %s "$work/ctx/plumb") bytes"

echo "== files in the image"
cid="$("${pm[@]}" create "$image")"
"${pm[@]}" export "$cid" | tar -tv --numeric-owner -f - | awk '{print $1, $2, $NF}' | sort -k3 >"$work/files.txt"
cat "$work/files.txt"
grep -qx -- '-r-xr-xr-x 0/0 usr/local/bin/plumb' "$work/files.txt" || fail "usr/local/bin/plumb missing or not mode 0555 root-owned"
grep -qE '^d[rwx-]{9} 65532/65532 data/?$' "$work/files.txt" || fail "/data missing or not owned by 65532:65532"
grep -q 'etc/passwd' "$work/files.txt" && fail "the image has an /etc/passwd; it should be scratch"

echo "== the binary copied out of the image"
"${pm[@]}" cp "$cid:/usr/local/bin/plumb" "$work/plumb-out"
cmp -s "$work/ctx/plumb" "$work/plumb-out" || fail "the binary in the image is not the one built"
# The build settings Go records in the binary: static (no cgo), trimmed paths.
go version -m "$work/plumb-out" >"$work/buildinfo.txt"
for s in 'CGO_ENABLED=0' '-trimpath=true'; do
	grep -q -- "build[[:space:]]*$s\$" "$work/buildinfo.txt" || fail "binary not built with $s: $(grep build "$work/buildinfo.txt" | tr '\n' ' ')"
	echo "ok  build setting $s"
done
got="$("$work/plumb-out" --version)"
want --version "$got" "plumb version $version"
mkdir -p "$work/data"
cp "$root/testdata/iris.csv" "$work/data/iris.csv"
embed=(embed --input iris.csv --id-column id --label-column species --perplexity 10 --iters 250 --exaggeration-iters 100 --seed 1 --out layout.csv)
(cd "$work/data" && "$work/plumb-out" "${embed[@]}" >"$work/embed.out" 2>&1) || { cat "$work/embed.out" >&2; fail "embed failed"; }
rows="$(($(wc -l <"$work/data/layout.csv") - 1))"
want "embed rows" "$rows" 150
# Columns named in the header; every x and y a finite number.
awk -F, 'NR == 1 { for (i = 1; i <= NF; i++) c[$i] = i; if (!c["x"] || !c["y"]) exit 1; next }
	$c["x"] !~ /^-?[0-9][0-9.e+-]*$/ || $c["y"] !~ /^-?[0-9][0-9.e+-]*$/ { bad++ }
	END { exit bad > 0 }' "$work/data/layout.csv" || fail "embed's layout.csv lacks finite x, y columns"
[ -s "$work/data/layout.csv.json" ] || fail "embed wrote no layout.csv.json sidecar"
echo "ok  embed: $(tail -n 1 "$work/embed.out")"

echo "== podman run"
if "${pm[@]}" run --rm --network none "$image" --version >"$work/run.out" 2>&1; then
	want "run --version" "$(cat "$work/run.out")" "plumb version $version"
	mkdir -p "$work/mounted"
	cp "$root/testdata/iris.csv" "$work/mounted/"
	chown -R 65532:65532 "$work/mounted"
	"${pm[@]}" run --rm --network none -v "$work/mounted:/data" "$image" "${embed[@]}" >"$work/run-embed.out" 2>&1 ||
		{ cat "$work/run-embed.out" >&2; fail "embed inside the container failed"; }
	cmp -s "$work/data/layout.csv" "$work/mounted/layout.csv" || fail "the container's layout differs from the copied binary's"
	echo "ok  run embed on a mounted directory: same layout as outside"
else
	echo "skipped: this machine refuses to run containers ($(grep -m1 -i 'error' "$work/run.out" || head -n 1 "$work/run.out"))"
fi
t3=$(date +%s)
echo "check.sh: image $image OK (binary $((t1 - t0)) s, image $((t2 - t1)) s, checks $((t3 - t2)) s)"
