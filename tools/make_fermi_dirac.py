"""Generate ``_fermi_dirac_coefficients.py`` for :mod:`matprops.kernels.fermi_dirac`.

Run offline from the repository root (needs mpmath, which the package does not;
``pip install -e ".[generators]"``); it lives outside the package, so the wheel does
not ship it::

    python tools/make_fermi_dirac.py
    python tools/make_fermi_dirac.py --reference-table   # values for the tests

It fits minimax rational approximations to the Fermi-Dirac integrals on the
segments set by ``BREAKS``/``DEGREES`` and ``INVERSE_BREAKS_ETA``/``INVERSE_DEGREES``
below (about 10 minutes, mostly mpmath evaluations), writes their coefficients
(rounded to double) to ``_fermi_dirac_coefficients.py``, then imports the numpy
module and prints its measured relative error against mpmath on a dense grid.
The reference is ``F_j(eta) = -Li_{j+1}(-e^eta)`` (DLMF §25.12) from
``mpmath.polylog``, cross-checked against direct quadrature of the integral.

The fit is a Remez exchange on a dense grid, started from a linearised
least-squares fit with Lawson reweighting; every error quoted is the maximum over
that grid (the verification grid is separate and denser).
"""

import importlib
import sys
import textwrap
from pathlib import Path

import mpmath as mp

mp.mp.dps = 32
HALF = mp.mpf(1) / 2
ORDERS = {"HALF": HALF, "MINUS_HALF": -HALF}
GRID = 700  # points per segment for the fits

# Forward segments, shared by both orders: edges of eta and the degrees (m, n)
# of numerator and denominator per order.  First segment eta <= 0 in z = e^eta,
# middle segments in t = eta - lower edge, last segment in s = 1/eta^2.
BREAKS = (0.0, 2.0, 5.0, 10.0, 20.0)
DEGREES = {
    "HALF": ((5, 6), (7, 7), (7, 7), (7, 6), (6, 7), (4, 4)),
    "MINUS_HALF": ((5, 6), (7, 7), (7, 7), (7, 6), (7, 7), (5, 6)),
}
# Inverse of F_{1/2}: edges in eta (converted to y = F_{1/2}(eta)) and degrees.
INVERSE_BREAKS_ETA = (2.0, 5.0, 12.0)
INVERSE_DEGREES = ((5, 5), (7, 7), (7, 7), (7, 7))


def fermi_dirac(j, eta):
    """F_j(eta) = (1/Gamma(j+1)) int_0^inf x^j / (1 + exp(x - eta)) dx."""
    return -mp.re(mp.polylog(j + 1, -mp.exp(eta)))


def fermi_dirac_quadrature(j, eta):
    """The same integral by quadrature, substituting x = u^2 (smooth integrand)."""

    def integrand(u):
        return 2 * u ** (2 * j + 1) / (1 + mp.exp(u * u - eta))

    top = mp.sqrt(max(eta, 0) + 80)
    edges = [0, mp.sqrt(eta)] if eta > 0 else [0]
    return mp.quad(integrand, edges + [top, mp.inf]) / mp.gamma(j + 1)


def sommerfeld_prefactor(j):
    return 1 / mp.gamma(j + 2)


# ----------------------------------------------------------------------------
# minimax rational fit
# ----------------------------------------------------------------------------


def polyval(c, t):
    r = mp.mpf(0)
    for ck in reversed(c):
        r = r * t + ck
    return r


def _errors(p, q, ts, fs, ws):
    return [
        w * (polyval(p, t) / polyval(q, t) / f - 1) for t, f, w in zip(ts, fs, ws, strict=False)
    ]


def _least_squares(ts, fs, ws, m, n, iterations=12):
    """Linearised fit min sum (w (P - f Q) / (f Q_old))^2 with Lawson weights."""
    lawson = [mp.mpf(1)] * len(ts)
    q_old = [mp.mpf(1)] * len(ts)
    best = None
    for _ in range(iterations):
        a = mp.matrix(len(ts), m + n + 1)
        b = mp.matrix(len(ts), 1)
        for i, (t, f, w) in enumerate(zip(ts, fs, ws, strict=False)):
            scale = w * mp.sqrt(lawson[i]) / (f * q_old[i])
            for k in range(m + 1):
                a[i, k] = t**k * scale
            for k in range(1, n + 1):
                a[i, m + k] = -f * t**k * scale
            b[i] = f * scale
        x = mp.qr_solve(a, b)[0]
        p = [x[k] for k in range(m + 1)]
        q = [mp.mpf(1)] + [x[m + k] for k in range(1, n + 1)]
        e = _errors(p, q, ts, fs, ws)
        worst = max(abs(v) for v in e)
        if best is None or worst < best[0]:
            best = (worst, p, q)
        q_old = [polyval(q, t) for t in ts]
        lawson = [lw * abs(v) for lw, v in zip(lawson, e, strict=False)]
        total = sum(lawson)
        lawson = [lw / total for lw in lawson]
    return best


def _alternating_extrema(e, count):
    """Indices of the largest |e| in each run of equal sign, thinned to `count`."""
    runs, i = [], 0
    while i < len(e):
        sign, top = e[i] >= 0, i
        while i < len(e) and (e[i] >= 0) == sign:
            if abs(e[i]) > abs(e[top]):
                top = i
            i += 1
        runs.append(top)
    while len(runs) > count:
        k = min(range(len(runs)), key=lambda r: abs(e[runs[r]]))
        del runs[k]
        if 0 < k < len(runs):  # neighbours now share a sign: keep the larger
            drop = k if abs(e[runs[k - 1]]) >= abs(e[runs[k]]) else k - 1
            del runs[drop]
    return runs


def minimax(ts, fs, ws, m, n):
    """Rational P/Q (degrees m, n, Q(0) = 1) minimising max w |P/Q / f - 1| on the grid."""
    scale = max(abs(t) for t in ts)  # fit in t/scale, well conditioned
    worst, p, q = _remez([t / scale for t in ts], fs, ws, m, n)
    return (worst, [c / scale**k for k, c in enumerate(p)], [c / scale**k for k, c in enumerate(q)])


def _remez(ts, fs, ws, m, n, iterations=40):
    worst, p, q = _least_squares(ts[::4], fs[::4], ws[::4], m, n)
    best = (max(abs(v) for v in _errors(p, q, ts, fs, ws)), p, q)
    size = m + n + 2
    for _ in range(iterations):
        e = _errors(p, q, ts, fs, ws)
        ref = _alternating_extrema(e, size)
        if len(ref) < size:
            break
        q_ref = [polyval(q, ts[i]) for i in ref]
        for _inner in range(6):  # levelled error E enters with the old Q
            a = mp.matrix(size, size)
            b = mp.matrix(size, 1)
            for row, i in enumerate(ref):
                t, f = ts[i], fs[i]
                for k in range(m + 1):
                    a[row, k] = t**k
                for k in range(1, n + 1):
                    a[row, m + k] = -f * t**k
                a[row, size - 1] = -((-1) ** row) * f * q_ref[row] / ws[i]
                b[row] = f
            x = mp.lu_solve(a, b)
            p = [x[k] for k in range(m + 1)]
            q = [mp.mpf(1)] + [x[m + k] for k in range(1, n + 1)]
            q_ref = [polyval(q, ts[i]) for i in ref]
        level = abs(x[size - 1])
        if min(polyval(q, t) for t in ts) <= 0:
            break  # a pole entered the segment: keep the best so far
        worst = max(abs(v) for v in _errors(p, q, ts, fs, ws))
        if worst < best[0]:
            best = (worst, p, q)
        if worst <= level * (1 + mp.mpf("1e-3")):
            break
    return best


def chebyshev_grid(a, b, size=GRID):
    """Chebyshev points of the first kind on [a, b] (end points excluded)."""
    return [(a + b) / 2 - (b - a) / 2 * mp.cos(mp.pi * (k + HALF) / size) for k in range(size)]


# ----------------------------------------------------------------------------
# the fits
# ----------------------------------------------------------------------------


def forward_segment(j, index):
    """Grid (t, target, weight) of one forward segment in its local variable."""
    lower = BREAKS[index - 1] if index > 0 else None
    if index == 0:  # g(z) = F/z, z in (0, 1]
        ts = chebyshev_grid(mp.mpf(0), mp.exp(BREAKS[0]))
        return ts, [fermi_dirac(j, mp.log(z)) / z for z in ts], [mp.mpf(1)] * len(ts)
    if index < len(BREAKS):  # F(lower + t)
        ts = chebyshev_grid(mp.mpf(0), mp.mpf(BREAKS[index]) - lower)
        return ts, [fermi_dirac(j, lower + t) for t in ts], [mp.mpf(1)] * len(ts)
    # F = eta^(j+1)/Gamma(j+2) (1 + s R(s)), s = eta^-2: fit R, weighted so that
    # the weighted error is the relative error of F
    ts = chebyshev_grid(mp.mpf(0), 1 / mp.mpf(lower) ** 2)
    fs, ws = [], []
    for s in ts:
        eta = 1 / mp.sqrt(s)
        g = fermi_dirac(j, eta) / (sommerfeld_prefactor(j) * eta ** (j + 1))
        fs.append((g - 1) / s)
        ws.append(abs(g - 1) / g)
    return ts, fs, ws


def inverse_segment(index, breaks_y):
    """Grid (t, target, weight) of one segment of eta = F_{1/2}^{-1}(y)."""
    edges_eta = (None,) + INVERSE_BREAKS_ETA + (None,)
    lo, hi = edges_eta[index], edges_eta[index + 1]
    if index == 0:  # eta = log(y R(y)), R = e^eta / y; eta from -40
        etas = _eta_grid(mp.mpf(-40), mp.mpf(hi))
        ys = [fermi_dirac(HALF, e) for e in etas]
        return ys, [mp.exp(e) / y for e, y in zip(etas, ys, strict=False)], [mp.mpf(1)] * len(ys)
    if index < len(INVERSE_BREAKS_ETA):  # eta = P(t)/Q(t), t = y - y_lower
        etas = _eta_grid(mp.mpf(lo), mp.mpf(hi))
        ys = [fermi_dirac(HALF, e) for e in etas]
        return [y - breaks_y[index - 1] for y in ys], etas, [mp.mpf(1)] * len(ys)
    # eta = u (1 + v R(v)), u = (Gamma(5/2) y)^(2/3), v = u^-2; relative error of eta
    etas = _eta_grid(mp.mpf(lo), mp.mpf(lo) * 10**6, log=True)
    ts, fs, ws = [], [], []
    for e in etas:
        u = (fermi_dirac(HALF, e) / sommerfeld_prefactor(HALF)) ** (mp.mpf(2) / 3)
        v = 1 / u**2
        ratio = e / u
        ts.append(v)
        fs.append((ratio - 1) / v)
        ws.append(abs(ratio - 1) / ratio)
    order = sorted(range(len(ts)), key=lambda i: ts[i])
    return [ts[i] for i in order], [fs[i] for i in order], [ws[i] for i in order]


def _eta_grid(a, b, size=GRID, log=False):
    if log:
        return [mp.exp(x) for x in chebyshev_grid(mp.log(a), mp.log(b), size)]
    return chebyshev_grid(a, b, size)


def to_double(coefficients, unit_constant=False):
    """Round to double; with unit_constant, the constant term (found within 2.3e-16 of 1)
    is set to exactly 1 so that P(0)/Q(0) = 1, making the limit exact (F = e^eta for
    eta -> -inf, eta = log y for y -> 0) at a cost below 2.3e-16 near it."""
    values = [float(c) for c in coefficients]
    if unit_constant:
        assert abs(values[0] - 1.0) < 2.3e-16, values[0]
        values[0] = 1.0
    return tuple(values)


def main():
    for j in (HALF, -HALF):
        for eta in (-30, -1, 0, 0.5, 3, 7, 25, 300):
            a, b = fermi_dirac(j, mp.mpf(eta)), fermi_dirac_quadrature(j, mp.mpf(eta))
            assert abs(a / b - 1) < mp.mpf("1e-25"), (j, eta, a, b)

    tables, report = {}, []
    for name, j in ORDERS.items():
        rows = []
        for index, (m, n) in enumerate(DEGREES[name]):
            ts, fs, ws = forward_segment(j, index)
            worst, p, q = minimax(ts, fs, ws, m, n)
            rows.append((to_double(p, unit_constant=index == 0), to_double(q)))
            report.append(f"{name} segment {index} ({m},{n}): fit error {mp.nstr(worst, 3)}")
            print(report[-1], flush=True)
        tables[name] = tuple(rows)
    breaks_y = tuple(float(fermi_dirac(HALF, mp.mpf(e))) for e in INVERSE_BREAKS_ETA)
    rows = []
    for index, (m, n) in enumerate(INVERSE_DEGREES):
        ts, fs, ws = inverse_segment(index, breaks_y)
        worst, p, q = minimax(ts, fs, ws, m, n)
        rows.append((to_double(p, unit_constant=index == 0), to_double(q)))
        report.append(f"HALF_INVERSE segment {index} ({m},{n}): fit error {mp.nstr(worst, 3)}")
        print(report[-1], flush=True)
    tables["HALF_INVERSE"] = tuple(rows)
    write_module(tables, breaks_y, report, {})
    accuracy = verify()
    write_module(tables, breaks_y, report, accuracy)


def write_module(tables, breaks_y, report, accuracy):
    lines = [
        '"""Coefficients of matprops.kernels.fermi_dirac (generated: do not edit).',
        "",
        f"Written by tools/make_fermi_dirac.py with mpmath {mp.__version__}.",
        "Mathematical constants of a special function (minimax rational approximations),",
        "not material data.  Each segment is a pair (numerator, denominator) of",
        "coefficients from degree 0 upwards; the variable of each segment is given in",
        "fermi_dirac.py.",
        "",
        "Fit errors (maximum weighted relative error on the fit grid, before rounding):",
        "",
        *[f"    {row}" for row in report],
        '"""',
        "",
        f"BREAKS = {BREAKS!r}",
        f"# F_1/2 at eta = {INVERSE_BREAKS_ETA!r}",
        f"INVERSE_BREAKS = {breaks_y!r}",
        "",
        "# measured by verify(): worst relative error and the eta where it occurred",
        "ACCURACY = {",
        *[f"    {name!r}: {value!r}," for name, value in accuracy.items()],
        "}",
    ]
    for name, rows in tables.items():
        lines.append("")
        lines.append(f"{name} = (")
        for p, q in rows:
            lines.append("    (")
            for coefficients in (p, q):
                text = "(" + ", ".join(repr(c) for c in coefficients) + "),"
                lines.extend(
                    textwrap.wrap(text, 99, initial_indent=" " * 8, subsequent_indent=" " * 9)
                )
            lines.append("    ),")
        lines.append(")")
    path = Path(__file__).resolve().parents[1] / "matprops/kernels/_fermi_dirac_coefficients.py"
    path.write_text("\n".join(lines) + "\n")
    print(f"wrote {path}")


def verify():
    """Measured relative error of the numpy module on a dense grid against mpmath.

    Forward: |F/F_exact - 1|.  Inverse: on y = F_1/2(eta) rounded to double, the error
    of the returned eta times F_-1/2/F_1/2, i.e. the relative error in F that the
    error of eta makes (without the rounding of eta itself to a double, which alone
    makes |F(eta)/y - 1| up to |eta| 1.1e-16).
    """
    import numpy as np

    for module in ("matprops.kernels._fermi_dirac_coefficients", "matprops.kernels.fermi_dirac"):
        if module in sys.modules:
            importlib.reload(sys.modules[module])
    fd = importlib.import_module("matprops.kernels.fermi_dirac")
    rng = np.random.default_rng(2026)
    edges = np.array(BREAKS)
    etas = np.concatenate(
        [
            np.linspace(-60.0, 60.0, 24001),
            rng.uniform(-2.0, 25.0, 6000),
            np.geomspace(60.0, 1e6, 400),
            -np.geomspace(60.0, 700.0, 100),
            edges,
            np.nextafter(edges, np.inf),
            np.nextafter(edges, -np.inf),
        ]
    )
    accuracy = {}
    for name, j in (("fd_half", HALF), ("fd_minus_half", -HALF)):
        values = getattr(fd, name)(etas)
        errors = [
            abs(mp.mpf(float(v)) / fermi_dirac(j, mp.mpf(float(e))) - 1)
            for v, e in zip(values, etas, strict=False)
        ]
        k = max(range(len(errors)), key=errors.__getitem__)
        accuracy[name] = (float(mp.nstr(errors[k], 3)), float(etas[k]))
    etas = np.concatenate(
        [
            np.linspace(-69.0, 40.0, 10901),
            rng.uniform(1.0, 15.0, 3000),
            np.geomspace(40.0, 1e5, 400),
        ]
    )
    errors = []
    for e in etas:
        e = mp.mpf(float(e))
        f, df = fermi_dirac(HALF, e), fermi_dirac(-HALF, e)
        y = float(f)
        exact = e + (y - f) / df  # eta of the double y, to first order
        errors.append(abs(float(fd.fd_half_inverse(y)) - exact) * df / f)
    k = max(range(len(errors)), key=errors.__getitem__)
    accuracy["fd_half_inverse"] = (float(mp.nstr(errors[k], 3)), float(etas[k]))
    for name, (error, where) in accuracy.items():
        print(f"{name}: worst relative error {error} at eta = {where!r}")
    assert max(error for error, _ in accuracy.values()) < 2e-15, "accuracy lost: see above"
    return accuracy


REFERENCE_ETA = (
    -700.0,
    -100.0,
    -40.0,
    -10.5,
    -3.0,
    -0.001,
    0.25,
    1.9999999,
    2.0000001,
    3.7,
    4.9999999,
    5.0000001,
    7.25,
    10.0000001,
    15.5,
    19.9999999,
    20.0000001,
    33.0,
    100.0,
    1000.0,
    10000.0,
    1000000.0,
)
REFERENCE_Y = (1e-30, 1e-10, 0.01, 0.5, 1.0, 2.8, 10.0, 31.0, 100.0, 1000.0, 1000000.0)


def reference_table():
    """Print the mpmath values tabulated in tests/test_fermi_dirac.py."""
    print("# eta, F_1/2(eta), F_-1/2(eta)")
    for eta in REFERENCE_ETA:
        values = [mp.nstr(fermi_dirac(j, mp.mpf(eta)), 20) for j in (HALF, -HALF)]
        print(f"({eta!r}, {values[0]}, {values[1]}),")
    print("# y, eta with F_1/2(eta) = y")
    for y in REFERENCE_Y:
        eta = mp.findroot(lambda e, y=y: fermi_dirac(HALF, e) - y, float(_rough_inverse(y)))
        print(f"({y!r}, {mp.nstr(eta, 20)}),")


def _rough_inverse(y):
    return mp.log(y) if y < 1 else (y / sommerfeld_prefactor(HALF)) ** (mp.mpf(2) / 3)


if __name__ == "__main__":
    if sys.argv[1:] == ["--reference-table"]:
        reference_table()
    else:
        main()
