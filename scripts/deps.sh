#!/usr/bin/env bash
# deps.sh — installs what building and testing nervegap needs on Debian 12,
# with apt-get, only when something is missing. Sourced by demo.sh and
# test.sh; safe to run again.
set -euo pipefail

# librsvg2-bin (rsvg-convert) renders the SVG of `nervegap plot` to PNG for
# the demo picture and the rendering test, fonts-dejavu-core gives it the
# font the SVG names, python3-pil decodes the PNG in that test.
ng_packages=(meson ninja-build pkg-config gcc libhdf5-dev check
             python3-scipy python3-numpy python3-h5py python3-cvxopt
             librsvg2-bin fonts-dejavu-core python3-pil)
# For the test of the Slurm job-array script on a single-node cluster
# (tests/slurm_cluster.py): test.sh installs these too.
ng_cluster_packages=(slurm-wlm munge)

ng_install_missing() {
    local missing=()
    for p in "${ng_packages[@]}" "$@"; do
        dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" ||
            missing+=("$p")
    done
    if [ ${#missing[@]} -eq 0 ]; then
        return 0
    fi
    echo "nervegap: installing ${missing[*]}" >&2
    local sudo=""
    if [ "$(id -u)" -ne 0 ]; then sudo="sudo"; fi
    $sudo apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
}

# Configures (once) and builds a build directory: ng_build DIR [meson options]
ng_build() {
    local dir=$1
    shift
    if [ ! -f "$dir/build.ninja" ]; then
        meson setup "$dir" "$@" >/dev/null
    fi
    ninja -C "$dir" >/dev/null
}
