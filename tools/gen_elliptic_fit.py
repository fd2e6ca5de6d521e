#!/usr/bin/env python3
"""Generate the piecewise polynomial tables of the fast complete elliptic integrals.

The filament kernel needs K(k) and K(k) - E(k) for the Landen modulus of every pair of
rings, n^2/2 times per inductance matrix and, with a moving workpiece, at every evaluation
of the right-hand side. The arithmetic-geometric mean gives them to a few ulps but costs a
square root and a division per step (five or six steps for nearby rings); these tables give
the same values with a few dozen multiply-adds and, near k = 1, one logarithm.

With the parameter m = k^2 and its complement mc = 1 - m (computed from the geometry):

  m <= 1/2:   K(m) = A(m),            K - E = m B(m)
  mc < 1/2:   K    = P(mc) - ln(mc) K(mc)/pi,
              K - E = G(mc) - ln(mc) E(mc)/pi,

where K(mc), E(mc) in the second line come from the first (mc <= 1/2) and

  P(mc) = K(1 - mc) + ln(mc) K(mc)/pi,   G(mc) = K(1 - mc) - E(1 - mc) + ln(mc) E(mc)/pi

are analytic on [0, 1/2] (DLMF 19.12.1 and 19.12.2: the logarithmic terms of K and E near
k = 1 have the coefficients K(k'^2)/pi and (K(k'^2) - E(k'^2))/pi; the script checks that P
and G are smooth by comparing them with their limits P(0) = ln 4, G(0) = ln 4 - 1).

Each of A, B, P, G is fitted on 32 intervals of width 1/64 by mpmath.chebyfit (a Chebyshev
least-squares fit, near minimax) in the local variable u = x - centre, at 60 digits, with
the degree raised until the fit error is below 2e-18 relative. The script then checks the
assembled K and K - E (evaluated here in exact rational arithmetic from the rounded double
coefficients) against mpmath's ellipk/ellipe at 4000 points from m = 1e-30 to mc = 1e-30
and stops with an error if any relative error exceeds 3e-16.

Usage (from the repository root):

    python3 tools/gen_elliptic_fit.py

It rewrites crates/ringpulse-physics/src/elliptic_fit.rs. Requires mpmath (tested with
1.3.0).
"""

import os
import sys

import mpmath
from mpmath import mp, mpf

mp.dps = 60

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
OUT = os.path.join(ROOT, "crates", "ringpulse-physics", "src", "elliptic_fit.rs")
# 32 intervals keep every piece at 8 terms (8 intervals needed 10 or 11): fewer
# multiply-adds in the kernel's innermost arithmetic, for a 8 KB table.
INTERVALS = 32
WIDTH = mpf(1) / (2 * INTERVALS)
TARGET = mpf("2e-18")


def k_of(m):
    return mpmath.ellipk(m)


def e_of(m):
    return mpmath.ellipe(m)


def one_minus(mc):
    """1 - mc without losing mc (extra precision for the subtraction)."""
    with mp.workdps(mp.dps + 80):
        return 1 - mpf(mc)


def fa(m):
    return k_of(m)


def fb(m):
    if m == 0:
        return mp.pi / 4
    return (k_of(m) - e_of(m)) / m


def fp(mc):
    if mc == 0:
        return mpmath.log(4)
    with mp.workdps(mp.dps + 80):
        m = 1 - mpf(mc)
        return k_of(m) + mpmath.log(mc) * k_of(mc) / mp.pi


def fg(mc):
    if mc == 0:
        return mpmath.log(4) - 1
    with mp.workdps(mp.dps + 80):
        m = 1 - mpf(mc)
        return k_of(m) - e_of(m) + mpmath.log(mc) * e_of(mc) / mp.pi


def fit(f, lo, hi):
    """Monomial coefficients (lowest first) in u = x - centre, and the fit's relative error."""
    c = (lo + hi) / 2
    h = (hi - lo) / 2
    scale = max(abs(f(lo)), abs(f(hi)), abs(f(c)))
    for degree in range(3, 30):
        poly, err = mpmath.chebyfit(lambda u: f(c + u), [-h, h], degree + 1, error=True)
        if err / scale < TARGET:
            return list(reversed(poly)), err / scale
    sys.exit(f"no fit below {TARGET} on [{lo}, {hi}]")


def horner(coef, u):
    acc = mpf(0)
    for a in reversed(coef):
        acc = acc * u + a
    return acc


def to_double(x):
    return float(x)


def main():
    # Smoothness of P and G at mc -> 0 (a wrong logarithmic coefficient would show as a
    # logarithm left over).
    for mc in [mpf("1e-40"), mpf("1e-25")]:
        if abs(fp(mc) - mpmath.log(4)) > mpf("1e-20") or abs(fg(mc) - (mpmath.log(4) - 1)) > mpf(
            "1e-20"
        ):
            sys.exit("P or G is not smooth at mc = 0: wrong logarithmic coefficients")
    tables = {}
    worst = {}
    for name, f in [("A", fa), ("B", fb), ("P", fp), ("G", fg)]:
        rows = []
        w = mpf(0)
        for i in range(INTERVALS):
            lo = i * WIDTH
            hi = (i + 1) * WIDTH
            coef, err = fit(f, lo, hi)
            rows.append([to_double(x) for x in coef])
            w = max(w, err)
        tables[name] = rows
        worst[name] = w

    def poly(name, x):
        i = min(int(x / WIDTH), INTERVALS - 1)
        u = x - (i + mpf(0.5)) * WIDTH
        return horner([mpf(v) for v in tables[name][i]], u)

    def k_and_g(m, mc):
        if mc >= mpf(0.5):
            return poly("A", m), m * poly("B", m)
        kc = poly("A", mc)
        ec = kc - mc * poly("B", mc)
        lg = mpmath.log(mc)
        return poly("P", mc) - lg * kc / mp.pi, poly("G", mc) - lg * ec / mp.pi

    # Check the assembled functions (coefficients rounded to doubles, arithmetic exact).
    bad = mpf(0)
    points = []
    for j in range(2000):
        points.append(mpf(10) ** (-30 + 30 * mpf(j) / 1999))  # m from 1e-30 to 1
    for p in list(points):
        points.append(p)
    checked = 0
    for j, x in enumerate(points):
        if j < 2000:
            m = x * mpf("0.999999")
            mc = one_minus(m)
        else:
            mc = x * mpf("0.999999")
            m = one_minus(mc)
        k, g = k_and_g(m, mc)
        with mp.workdps(mp.dps + 80):
            kx = k_of(m)
            gx = kx - e_of(m)
        bad = max(bad, abs(k / kx - 1), abs(g / gx - 1))
        checked += 1
    if bad > mpf("3e-16"):
        sys.exit(f"assembled K or K - E off by {mpmath.nstr(bad, 3)} relative")

    lines = []
    lines.append("//! Generated by tools/gen_elliptic_fit.py with mpmath "
                 f"{mpmath.__version__}; do not edit by hand.")
    lines.append("//!")
    lines.append("//! Piecewise polynomial coefficients (lowest degree first, in u = x − centre of")
    lines.append(f"//! each of {INTERVALS} intervals of width 1/{2 * INTERVALS}) of the functions A, B, P, G documented in")
    lines.append("//! `elliptic::complete_k_and_difference`. Largest fit error relative to the")
    lines.append("//! function: " + ", ".join(f"{n} {mpmath.nstr(worst[n], 2)}" for n in "ABPG")
                 + f"; assembled K and K − E checked at {checked} points to "
                 f"{mpmath.nstr(bad, 2)} relative.")
    lines.append("")
    lines.append("#![allow(clippy::excessive_precision, clippy::unreadable_literal)]")
    lines.append("")
    lines.append("/// Number of intervals of each table; they split [0, 1/2] evenly.")
    lines.append(f"pub const INTERVALS: usize = {INTERVALS};")
    lines.append("")
    for name in "ABPG":
        rows = tables[name]
        deg = max(len(r) for r in rows)
        lines.append(f"/// Coefficients of {name} on the {INTERVALS} intervals (padded with zeros to {deg} terms).")
        lines.append(f"pub const {name}: [[f64; {deg}]; INTERVALS] = [")
        for r in rows:
            padded = r + [0.0] * (deg - len(r))
            lines.append("    [" + ", ".join(repr(v) for v in padded) + "],")
        lines.append("];")
        lines.append("")
    with open(OUT, "w") as fh:
        fh.write("\n".join(lines))
    print(f"wrote {OUT}; worst fit " + ", ".join(f"{n} {mpmath.nstr(worst[n], 3)}" for n in "ABPG")
          + f"; assembled check {mpmath.nstr(bad, 3)}")


if __name__ == "__main__":
    main()
