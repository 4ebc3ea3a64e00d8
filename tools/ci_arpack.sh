#!/usr/bin/env bash
# ARPACK cross-check of the eigen engine (cargo feature `arpack` of twistmode-eigen).
# Installs the system libraries the feature needs (Debian packages: libarpack2-dev for
# ARPACK itself, pkg-config to find it, libclang-dev for the bindings generator), then
# runs the eigen crate's tests with the feature on: ARPACK and the default Krylov-Schur
# path must agree on the same pencils.
set -euo pipefail
cd "$(dirname "$0")/.."

packages=(libarpack2-dev pkg-config libclang-dev)
if ! dpkg -s "${packages[@]}" >/dev/null 2>&1; then
    sudo=()
    if [ "$(id -u)" -ne 0 ]; then sudo=(sudo); fi
    "${sudo[@]}" apt-get update -q
    DEBIAN_FRONTEND=noninteractive "${sudo[@]}" apt-get install -y -q "${packages[@]}"
fi

cargo clippy -p twistmode-eigen --all-targets --features arpack --locked -- -D warnings
cargo test -p twistmode-eigen --features arpack --locked
