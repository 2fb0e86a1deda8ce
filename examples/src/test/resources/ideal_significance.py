#!/usr/bin/env python3
"""Independent check of DemoScenario.idealSignificance: a plain Riemann sum in 0.05 GeV steps over
200-2000 GeV (the Java code uses Simpson's rule over +-10 widths around the peak). Python 3.11, math only.
Printed on 2026-12-02: standard (B=20000, S=38) 4.7245, small (B=2000, S=15) 4.8917."""
import math


def ideal_z(background, signal, mass=750.0, width=18.0, slope=100.0):
    total, dm, m = 0.0, 0.05, 200.0
    while m < 2000.0:
        b = background / slope * math.exp(-(m - 200.0) / slope)
        s = signal / (width * math.sqrt(2 * math.pi)) * math.exp(-0.5 * ((m - mass) / width) ** 2)
        if s > 0:
            total += ((s + b) * math.log1p(s / b) - s) * dm
        m += dm
    return math.sqrt(2 * total)


print("standard %.4f" % ideal_z(20000, 38))
print("small    %.4f" % ideal_z(2000, 15))
