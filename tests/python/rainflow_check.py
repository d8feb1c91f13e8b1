#!/usr/bin/env python3
"""Independent reference for glaze's rainflow counting (glaze_post::rainflow):
the PyPI package `rainflow` (ASTM E1049-85 section 5.4.4, three-point
method, residual ranges counted as half cycles).

Usage: rainflow_check.py FILE
FILE holds one load history per line, samples separated by spaces, each
written so that float() reads back the exact binary value.

Prints, for each history k (0-based), in this order:
    series k
    cycle <range> <mean> <count> <start> <end>   (rainflow.extract_cycles, in order)
    hist <range> <count>                         (rainflow.count_cycles, ascending range)
with every float as repr() (shortest round-trip form). Exits with status 2
and a message on stderr if the package is missing.
"""
import sys

try:
    import rainflow
except ModuleNotFoundError:
    sys.stderr.write(
        "ModuleNotFoundError: the PyPI package 'rainflow' is needed "
        "(python3 -m pip install rainflow, or run scripts/setup.sh)\n"
    )
    sys.exit(2)


def main():
    if len(sys.argv) != 2:
        sys.stderr.write(__doc__)
        sys.exit(1)
    print("rainflow", rainflow.__version__)
    with open(sys.argv[1]) as f:
        histories = [[float(t) for t in line.split()] for line in f if line.strip()]
    for k, series in enumerate(histories):
        print("series", k)
        for rng, mean, count, i_start, i_end in rainflow.extract_cycles(series):
            print("cycle", repr(float(rng)), repr(float(mean)), repr(float(count)), i_start, i_end)
        for rng, count in rainflow.count_cycles(series):
            print("hist", repr(float(rng)), repr(float(count)))


if __name__ == "__main__":
    main()
