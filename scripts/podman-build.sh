#!/usr/bin/env bash
# Build the service image with Debian's podman on a machine that reaches no container registry.
# Not run in CI: it needs root (debootstrap, chroot, mounts) and takes minutes. CI checks the
# Dockerfile with hadolint and runs its CMD live instead (tests/test_dockerfile.py, tests/live/).
#
# The Dockerfile starts FROM python:3.11-slim-bookworm, which cannot be pulled here. Step 1
# builds a local stand-in under that exact name from Debian bookworm packages (bookworm's
# python3 is 3.11): a minimal root filesystem with python3 and a virtual environment in
# /opt/python that comes first on PATH, so `python`, `pip` and `gunicorn` resolve as they do
# in the official image (whose interpreter lives in /usr/local/bin). Step 2 builds the
# Dockerfile against it with --pull=never. The stand-in is for local builds and smoke tests;
# release images come from the real base image: with a registry, run only
#     podman build --format docker -t pellet-effectiveness .
#
# Needs: apt-get install podman debootstrap; run as root.
# Usage: scripts/podman-build.sh [TAG]        (default TAG: localhost/pellet-effectiveness:dev)
# Environment:
#   DEBIAN_MIRROR      mirror for debootstrap (default: deb.debian.org)
#   REBUILD_BASE=1     rebuild the stand-in base even if it exists
#   PODMAN_BUILD_OPTS  extra `podman build` options, split on spaces. In a sandbox where crun
#                      cannot create cgroups ("cgroups in hybrid mode not supported"), and behind
#                      a TLS-intercepting proxy whose CA the host trusts, this worked:
#                        PODMAN_BUILD_OPTS="--isolation chroot
#                          -v /etc/ssl/certs/ca-certificates.crt:/etc/ssl/certs/ca-certificates.crt:ro
#                          -v /etc/pip.conf:/etc/pip.conf:ro"
#                      (build-time mounts only: nothing of the host ends up in the image).
#   SMOKE=run          afterwards run the image (podman run, 127.0.0.1:18080), wait for its
#                      HEALTHCHECK, show the log, stop it with SIGTERM.
#   SMOKE=chroot       where podman cannot run containers (e.g. "setrlimit RLIMIT_NOFILE:
#                      Operation not permitted"): run the image's CMD as its USER, with its ENV
#                      and WORKDIR, in a chroot of its file system, on 127.0.0.1:18080.
set -euo pipefail

tag="${1:-localhost/pellet-effectiveness:dev}"
base="python:3.11-slim-bookworm"
root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
smoke_port=18080

if [[ $(id -u) -ne 0 ]]; then
    echo "run as root (debootstrap and chroot need it)" >&2
    exit 1
fi
for tool in podman debootstrap; do
    command -v "$tool" >/dev/null || { echo "missing $tool: apt-get install $tool" >&2; exit 1; }
done

# --- step 1: the stand-in base image -------------------------------------------------------------
if [[ "${REBUILD_BASE:-0}" == 1 ]] || ! podman image exists "docker.io/library/$base"; then
    rootfs="$(mktemp -d)"
    trap 'rm -rf "$rootfs"' EXIT
    echo "building stand-in $base from Debian bookworm"
    debootstrap --variant=minbase --include=python3,python3-venv,ca-certificates \
        bookworm "$rootfs" "${DEBIAN_MIRROR:-http://deb.debian.org/debian}"
    # python and pip first on PATH, with a pip that may install as root (bookworm's system
    # python is marked externally managed, PEP 668).
    chroot "$rootfs" /usr/bin/python3 -m venv /opt/python
    rm -rf "$rootfs"/var/lib/apt/lists/* "$rootfs"/var/cache/apt/*.bin "$rootfs"/var/cache/apt/archives/*.deb
    tar -C "$rootfs" -c . | podman import \
        --change 'ENV PATH=/opt/python/bin:/usr/local/sbin:/usr/local/bin:/usr/sbin:/usr/bin:/sbin:/bin' \
        --change 'ENV LANG=C.UTF-8' \
        --change 'CMD ["python3"]' \
        - "docker.io/library/$base"
    # Short-name lookup tries localhost/ first on some configurations.
    podman tag "docker.io/library/$base" "localhost/$base"
    rm -rf "$rootfs"
    trap - EXIT
fi

# --- step 2: the service image ---------------------------------------------------------------------
# --format docker keeps HEALTHCHECK (the OCI image format has no field for it).
read -r -a extra <<< "${PODMAN_BUILD_OPTS:-}"
podman build --pull=never --format docker "${extra[@]}" --tag "$tag" --file "$root/Dockerfile" "$root"
echo "built $tag; run it with: podman run --rm -p 8080:8080 --stop-timeout 25 $tag"

# --- optional smoke test -------------------------------------------------------------------------
probe() {  # the HEALTHCHECK's request, from the host
    python3 -c "import http.client; c = http.client.HTTPConnection('127.0.0.1', $smoke_port, timeout=4); c.request('GET', '/healthz'); raise SystemExit(c.getresponse().status != 200)" 2>/dev/null
}

case "${SMOKE:-}" in
"") ;;
run)
    name="pellet-smoke-$$"
    podman run --detach --rm --name "$name" --publish "127.0.0.1:$smoke_port:8080" "$tag" >/dev/null
    trap 'podman stop --time 25 "$name" >/dev/null 2>&1 || true' EXIT
    for _ in $(seq 1 60); do
        if podman healthcheck run "$name" >/dev/null 2>&1 && probe; then
            echo "healthy; last log lines:"
            podman logs "$name" 2>&1 | tail -n 3
            exit 0
        fi
        sleep 1
    done
    echo "not healthy within 60 s; logs:" >&2
    podman logs "$name" >&2 || true
    exit 1
    ;;
chroot)
    container="$(podman create "$tag")"
    fs="$(podman mount "$container")"
    # shellcheck disable=SC2317  # called by the EXIT trap
    cleanup() {
        if [[ -n "${pid:-}" ]]; then kill -KILL -- "-$pid" 2>/dev/null || true; fi
        umount "$fs/dev/shm" 2>/dev/null || true
        podman umount "$container" >/dev/null
        podman rm "$container" >/dev/null
    }
    trap cleanup EXIT
    # What a runtime provides: a writable tmpfs on /dev/shm (the worker heartbeat directory).
    mount -t tmpfs -o mode=1777,size=16m tmpfs "$fs/dev/shm"
    user="$(podman image inspect "$tag" --format '{{.Config.User}}')"
    workdir="$(podman image inspect "$tag" --format '{{.Config.WorkingDir}}')"
    mapfile -t env < <(podman image inspect "$tag" --format '{{range .Config.Env}}{{println .}}{{end}}' | sed '/^$/d')
    mapfile -t cmd < <(podman image inspect "$tag" --format '{{range .Config.Cmd}}{{println .}}{{end}}' | sed '/^$/d')
    home="$(chroot "$fs" getent passwd "${user%%:*}" | cut -d: -f6)"
    # Loopback only, unlike the container's 0.0.0.0: the chroot shares this machine's network.
    # shellcheck disable=SC2016  # $1 and $@ belong to the inner sh
    setsid chroot --userspec="$user" "$fs" /usr/bin/env -i "${env[@]}" "HOME=${home:-/}" \
        PELLET_HOST=127.0.0.1 PELLET_PORT="$smoke_port" \
        /bin/sh -c 'cd "$1" && shift && exec "$@"' sh "$workdir" "${cmd[@]}" &
    pid=$!
    for _ in $(seq 1 60); do
        if probe; then
            echo "healthy as user $user (home ${home:-/}); stopping with SIGTERM"
            kill -TERM "$pid"
            status=0
            wait "$pid" || status=$?
            pid=""
            echo "gunicorn exit status: $status"
            exit "$status"
        fi
        sleep 1
    done
    echo "not healthy within 60 s" >&2
    exit 1
    ;;
*)
    echo "SMOKE must be run or chroot" >&2
    exit 2
    ;;
esac
