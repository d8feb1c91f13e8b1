#!/usr/bin/env bash
# Installs what glaze needs beyond the Rust toolchain, only when missing:
# the HDF5 C library (Debian's libhdf5-dev), fontconfig, FreeType and a font
# for the PNG plots; for the tests, Slurm and MUNGE (a one-node cluster the
# cluster test starts itself), Chromium (the comparison page in a browser)
# and Python's numpy, scipy, h5py, rainflow and meshio.
set -euo pipefail

need_apt=()
if ! pkg-config --exists hdf5 2>/dev/null && [ ! -e /usr/include/hdf5/serial/hdf5.h ] && [ ! -e /usr/include/hdf5.h ]; then
    need_apt+=(libhdf5-dev)
fi
# PNG plots draw their text through fontconfig and FreeType, with a system font.
if ! pkg-config --exists fontconfig 2>/dev/null && [ ! -e /usr/include/fontconfig/fontconfig.h ]; then
    need_apt+=(libfontconfig1-dev)
fi
if ! pkg-config --exists freetype2 2>/dev/null && [ ! -e /usr/include/freetype2/ft2build.h ]; then
    need_apt+=(libfreetype-dev)
fi
if [ -z "$(find /usr/share/fonts /usr/local/share/fonts \( -name '*.ttf' -o -name '*.otf' \) -print -quit 2>/dev/null)" ]; then
    need_apt+=(fonts-dejavu-core)
fi
command -v pkg-config >/dev/null 2>&1 || need_apt+=(pkg-config)
# The cluster test runs its own one-node Slurm controller with MUNGE.
[ -x /usr/sbin/slurmctld ] && [ -x /usr/sbin/slurmd ] && command -v sbatch >/dev/null 2>&1 || need_apt+=(slurm-wlm)
[ -x /usr/sbin/munged ] || need_apt+=(munge)
# The comparison page is checked in a headless browser.
command -v chromium >/dev/null 2>&1 || need_apt+=(chromium)
command -v python3 >/dev/null 2>&1 || need_apt+=(python3 python3-pip)
if [ ${#need_apt[@]} -gt 0 ]; then
    echo "setup: installing ${need_apt[*]} with apt-get" >&2
    SUDO=""
    [ "$(id -u)" -ne 0 ] && SUDO="sudo"
    $SUDO apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${need_apt[@]}" >/dev/null
fi

if ! python3 -c "import numpy, scipy, h5py, rainflow, meshio" >/dev/null 2>&1; then
    echo "setup: installing numpy scipy h5py rainflow meshio with pip" >&2
    python3 -m pip install --quiet numpy scipy h5py rainflow meshio 2>/dev/null \
        || python3 -m pip install --quiet --break-system-packages numpy scipy h5py rainflow meshio
fi
