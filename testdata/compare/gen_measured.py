#!/usr/bin/python3
"""Write woofer_measured.csv: a "measurement" of the woofer response of
testdata/examples/speaker_crossover.nodal with a known deviation added.

The woofer way is two buffered RC low-pass sections with R·C = 1/(2π·fc),
fc = 2.5 kHz, so its exact transfer function is H(s) = 1/(1 + s/ωc)²,
ωc = 2π·2500 rad/s (closed form, no circuit simulation here). The file holds
41 log-spaced frequencies from 100 Hz to 20 kHz with

    mag_db    = 20·log10|H(j2πf)| + d(f),  d(f)  = 0.5 + 1.5·exp(−(log10(f/3000))²/0.02)  dB
    phase_deg = arg H(j2πf) (degrees) + p(f), p(f) = 4·exp(−(log10(f/1000))²/0.05)     deg

The Go test (cmd/nodal/compare_test.go) evaluates d(f) and p(f) itself and
checks that `nodal compare --measured` recovers them at every point, with
the largest difference and the RMS over the band.

Run: /usr/bin/python3 testdata/compare/gen_measured.py
"""
import cmath
import math
import os

FC = 2500.0


def d_db(f):
    return 0.5 + 1.5 * math.exp(-(math.log10(f / 3000.0) ** 2) / 0.02)


def p_deg(f):
    return 4.0 * math.exp(-(math.log10(f / 1000.0) ** 2) / 0.05)


def main():
    out = os.path.join(os.path.dirname(os.path.abspath(__file__)), "woofer_measured.csv")
    n = 41
    with open(out, "w") as fh:
        fh.write("Freq_Hz,mag_dB,phase_deg,comment\n")
        for i in range(n):
            f = 100.0 * (20000.0 / 100.0) ** (i / (n - 1))
            x = 1j * f / FC
            h = 1.0 / (1.0 + x) ** 2
            mag = 20.0 * math.log10(abs(h)) + d_db(f)
            ph = math.degrees(cmath.phase(h)) + p_deg(f)
            fh.write("%.12g,%.12g,%.12g,bench\n" % (f, mag, ph))


if __name__ == "__main__":
    main()
