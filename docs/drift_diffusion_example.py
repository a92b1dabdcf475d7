"""A toy drift-diffusion solver that calls matprops' bound kernels at every iteration.

THE DEVICE IS INVENTED for this example: "the invented Lantern test diode", a 30 um
slab of silicon with a phosphorus-diffused front (a Gaussian profile, 1e19 cm^-3 at
the surface, 0.3 um deep) on a boron-doped base of 5e16 cm^-3, ohmic contacts at both
ends, at 330 K, with an invented Shockley-Read-Hall lifetime of 10 us for both
carriers. No real product, measurement or site is described.

It shows the door for simulation codes at work (see docs/simulation.md): the solver
takes bound kernels once and calls them on plain arrays at every Gummel iteration, as
a simulation code does:

- the effective intrinsic density with Schenk's narrowing, which depends on the local
  electron and hole densities, so it changes from one iteration to the next; its
  partial derivatives with respect to n and p enter the Newton step of Poisson's
  equation;
- Klaassen's mobilities of electrons and holes, which depend on the dopant and the
  carrier densities, fed the kinds of density the kernel asks for
  (``kernel.input_kinds``: total or ionised dopants, free carriers or the carriers of
  complete ionisation; from release 2026.2 the total dopant densities and the carriers
  of complete ionisation, which is what this solver has: it ionises every dopant);
- the radiative recombination coefficient;

and validates the mesh once, up front, with ``kernel.check``.

Physics (a toy, one-dimensional and steady state): Boltzmann statistics with the
effective intrinsic density split equally between the band edges; Poisson's equation
by Newton's method; electron and hole continuity with the Scharfetter-Gummel
discretisation on the effective potentials ``psi +- Vt ln n_ie``; Gummel's decoupled
iteration; SRH and radiative recombination. The numbers it prints are those of the
invented device: model estimates, not a design.

Run: ``python docs/drift_diffusion_example.py``
"""

from __future__ import annotations

import numpy as np
from scipy.constants import elementary_charge, epsilon_0
from scipy.linalg import solve_banded

import matprops
from matprops.kernels.constants import BOLTZMANN_EV

Q = elementary_charge  # C
EPSILON_0 = epsilon_0 * 1e-2  # F/cm

# --- the invented device -----------------------------------------------------------------
LENGTH = 30e-4  # cm (30 um)
NODES = 241
TEMPERATURE = 330.0  # K
SURFACE_DONORS, DEPTH = 1e19, 0.3e-4  # cm^-3, cm (Gaussian phosphorus diffusion)
BASE_ACCEPTORS = 5e16  # cm^-3
SRH_LIFETIME = 10e-6  # s, invented, electrons and holes alike


def bernoulli(x):
    """B(x) = x / (exp(x) - 1), without cancellation near 0."""
    x = np.asarray(x, dtype=float)
    small = np.abs(x) < 1e-6
    safe = np.where(small, 1.0, x)
    return np.where(small, 1.0 - 0.5 * x, safe / np.expm1(safe))


class Diode:
    """The invented diode on its mesh, and the kernels it calls."""

    def __init__(self, si=None):
        si = si or matprops.silicon()
        self.x = np.linspace(0.0, LENGTH, NODES)
        self.h = self.x[1] - self.x[0]
        self.t = np.full(NODES, TEMPERATURE)
        self.nd = SURFACE_DONORS * np.exp(-((self.x / DEPTH) ** 2))
        self.na = np.full(NODES, BASE_ACCEPTORS)
        self.vt = BOLTZMANN_EV * TEMPERATURE  # V
        self.epsilon = float(si.permittivity().magnitude) * EPSILON_0
        # the bound kernels, taken once
        self.ni_eff = si.kernel("effective_intrinsic_density")
        self.mobility = {c: si.kernel("mobility", carrier=c) for c in ("electron", "hole")}
        self.radiative = si.kernel("radiative_coefficient")
        # feed the mobility the dopant densities it asks for: this solver ionises every
        # dopant (Poisson with Nd - Na), so its own n, p are the carriers of complete
        # ionisation and the total densities serve a model fitted with them; a model
        # that asks for ionised densities gets those of equilibrium, solved once
        kinds = self.mobility["electron"].input_kinds
        if kinds["donor_density"] == "ionised" or kinds["acceptor_density"] == "ionised":
            state = si.kernel("equilibrium")(self.t, Nd=self.nd, Na=self.na)
            self.scatterers = (state["ionised_donors"], state["ionised_acceptors"])
        else:
            self.scatterers = (self.nd, self.na)
        # the mesh, validated once, with every carrier density from 1e2 cm^-3 to the
        # largest dopant density; the warnings list what lies outside a model's range
        span = np.array([[1e2], [SURFACE_DONORS]])
        self.warnings = (
            self.ni_eff.check(self.t, Nd=self.nd, Na=self.na, n=span, p=span)
            + self.mobility["electron"].check(self.t, Nd=self.nd, Na=self.na, n=span, p=span)
            + self.radiative.check(self.t)
        )

    # --- material parameters at the current densities (kernel calls) ---------------------
    def intrinsic(self, n, p):
        """n_ie and its logarithmic partials d ln n_ie / dn, d ln n_ie / dp."""
        value, partials = self.ni_eff.derivatives(self.t, Nd=self.nd, Na=self.na, n=n, p=p)
        return value, partials["electron_density"] / value, partials["hole_density"] / value

    def mobilities(self, n, p):
        nd, na = self.scatterers
        return (
            self.mobility["electron"](self.t, Nd=nd, Na=na, n=n, p=p),
            self.mobility["hole"](self.t, Nd=nd, Na=na, n=n, p=p),
        )

    def recombination(self, n, p, nie):
        """SRH (invented lifetime) and radiative: R = a n - b for electrons (p fixed),
        R = a' p - b' for holes (n fixed), linearised at the current densities."""
        srh = 1.0 / (SRH_LIFETIME * (n + p + 2.0 * nie))
        rad = self.radiative(self.t)
        rate = srh + rad
        return p * rate, n * rate, nie * nie * rate

    # --- boundary values ------------------------------------------------------------------
    def contact(self, index, bias, nie):
        net = self.nd[index] - self.na[index]
        root = np.sqrt((0.5 * net) ** 2 + nie * nie)
        n = 0.5 * net + root if net > 0 else nie * nie / (root - 0.5 * net)
        p = nie * nie / n
        return n, p, bias + self.vt * np.log(n / nie)

    # --- the three equations ----------------------------------------------------------------
    def poisson(self, psi, phi_n, phi_p, n, p, steps=30):
        """Newton on Poisson's equation at fixed quasi-Fermi potentials; n_ie follows
        the densities (its n, p partials in the Jacobian)."""
        c = self.epsilon / self.h**2
        for _ in range(steps):
            nie, a, b = self.intrinsic(n, p)
            n = nie * np.exp((psi - phi_n) / self.vt)
            p = nie * np.exp((phi_p - psi) / self.vt)
            residual = np.zeros(NODES)
            residual[1:-1] = (
                c * (psi[:-2] - 2.0 * psi[1:-1] + psi[2:]) + Q * (p - n + self.nd - self.na)[1:-1]
            )
            # dn/dpsi and dp/dpsi with n_ie(n, p): [1 - n a, -n b; -p a, 1 - p b] d = rhs
            det = (1.0 - n * a) * (1.0 - p * b) - n * b * p * a
            dn = (n / self.vt * (1.0 - p * b) - n * b * p / self.vt) / det
            dp = (-p / self.vt * (1.0 - n * a) + p * a * n / self.vt) / det
            bands = np.zeros((3, NODES))
            bands[0, 2:] = c
            bands[2, :-2] = c
            bands[1, 1:-1] = -2.0 * c + Q * (dp - dn)[1:-1]
            bands[1, 0] = bands[1, -1] = 1.0
            step = solve_banded((1, 1), bands, -residual)
            psi = psi + np.clip(step, -0.1, 0.1)
            if np.max(np.abs(step)) < 1e-9:
                break
        nie, _, _ = self.intrinsic(n, p)
        return psi, nie * np.exp((psi - phi_n) / self.vt), nie * np.exp((phi_p - psi) / self.vt)

    def continuity(self, psi, n, p, boundary):
        """Scharfetter-Gummel electron and hole continuity on the effective potentials."""
        nie, _, _ = self.intrinsic(n, p)
        mu_n, mu_p = self.mobilities(n, p)
        a_n, a_p, b = self.recombination(n, p, nie)
        log_nie = np.log(nie)
        delta_n = np.diff(psi / self.vt + log_nie)  # electron effective potential
        delta_p = np.diff(psi / self.vt - log_nie)  # hole effective potential
        c_n = Q * self.vt * 0.5 * (mu_n[1:] + mu_n[:-1]) / self.h**2
        c_p = Q * self.vt * 0.5 * (mu_p[1:] + mu_p[:-1]) / self.h**2
        (n0, p0), (nl, pl) = boundary
        solutions = []
        for carrier, cc, d, a, start, end in (
            ("n", c_n, delta_n, a_n, n0, nl),
            ("p", c_p, delta_p, a_p, p0, pl),
        ):
            plus, minus = bernoulli(d), bernoulli(-d)
            bands = np.zeros((3, NODES))
            rhs = np.zeros(NODES)
            if carrier == "n":  # (J(i+1/2) - J(i-1/2))/h = q R
                bands[0, 2:] = cc[1:] * plus[1:]
                bands[2, :-2] = cc[:-1] * minus[:-1]
                bands[1, 1:-1] = -(cc[1:] * minus[1:] + cc[:-1] * plus[:-1]) - Q * a[1:-1]
                rhs[1:-1] = -Q * b[1:-1]
            else:  # (J(i+1/2) - J(i-1/2))/h = -q R
                bands[0, 2:] = -cc[1:] * minus[1:]
                bands[2, :-2] = -cc[:-1] * plus[:-1]
                bands[1, 1:-1] = cc[1:] * plus[1:] + cc[:-1] * minus[:-1] + Q * a[1:-1]
                rhs[1:-1] = Q * b[1:-1]
            bands[1, 0] = bands[1, -1] = 1.0
            rhs[0], rhs[-1] = start, end
            solutions.append(np.maximum(solve_banded((1, 1), bands, rhs), 1e-30))
        return solutions[0], solutions[1], (mu_n, mu_p, delta_n, delta_p, nie)

    def current(self, n, p, parts):
        """Electron, hole and total current densities at the mid-points, A/cm^2."""
        mu_n, mu_p, delta_n, delta_p, _ = parts
        c_n = Q * self.vt * 0.5 * (mu_n[1:] + mu_n[:-1]) / self.h
        c_p = Q * self.vt * 0.5 * (mu_p[1:] + mu_p[:-1]) / self.h
        j_n = c_n * (n[1:] * bernoulli(delta_n) - n[:-1] * bernoulli(-delta_n))
        j_p = c_p * (p[:-1] * bernoulli(delta_p) - p[1:] * bernoulli(-delta_p))
        return j_n, j_p, j_n + j_p

    # --- Gummel's iteration ------------------------------------------------------------------
    def solve(self, biases=(0.0, 0.1, 0.2, 0.3, 0.4), tolerance=1e-7, iterations=200):
        """Steady states at each forward bias (the p contact at +V); returns a list of
        dicts (bias, iterations, total current, the arrays)."""
        nie = self.ni_eff(self.t, Nd=self.nd, Na=self.na, n=self.nd + 1e4, p=1e4 + self.na)
        net = self.nd - self.na
        psi = self.vt * np.arcsinh(net / (2.0 * nie))
        n = 0.5 * net + np.sqrt((0.5 * net) ** 2 + nie**2)
        p = nie**2 / n
        states = []
        for bias in biases:
            for count in range(1, iterations + 1):
                nie_now = self.ni_eff(self.t, Nd=self.nd, Na=self.na, n=n, p=p)
                phi_n = psi - self.vt * np.log(n / nie_now)
                phi_p = psi + self.vt * np.log(p / nie_now)
                start, end = self.contact(0, 0.0, nie_now[0]), self.contact(-1, bias, nie_now[-1])
                phi_n[0] = phi_p[0] = 0.0
                phi_n[-1] = phi_p[-1] = bias
                psi_new = psi.copy()
                psi_new[0], psi_new[-1] = start[2], end[2]
                psi_new, n, p = self.poisson(psi_new, phi_n, phi_p, n, p)
                n, p, parts = self.continuity(
                    psi_new, n, p, ((start[0], start[1]), (end[0], end[1]))
                )
                change = np.max(np.abs(psi_new - psi))
                psi = psi_new
                if change < tolerance and count > 2:
                    break
            else:
                raise RuntimeError(f"Gummel iteration did not converge at {bias} V")
            _, _, total = self.current(n, p, parts)
            states.append(
                {
                    "bias": bias,
                    "iterations": count,
                    "current": float(np.median(total)),
                    "current_spread": float(np.ptp(total) / max(abs(np.median(total)), 1e-300)),
                    "psi": psi,
                    "n": n,
                    "p": p,
                    "nie": parts[4],
                }
            )
        return states


def main():
    diode = Diode()
    print("the invented Lantern test diode (invented device; model estimates)")
    for message in diode.warnings:
        print("  validity:", message[:110] + ("..." if len(message) > 110 else ""))
    for state in diode.solve():
        # the current flows from the p contact (x = L) to the n contact: negative x
        print(
            f"  V = {state['bias']:.2f} V: {state['iterations']:3d} Gummel iterations, "
            f"|J| = {abs(state['current']):.3e} A/cm^2 (spread along x "
            f"{state['current_spread']:.1e}), n_ie at the front {state['nie'][0]:.3e} cm^-3"
        )


if __name__ == "__main__":
    main()
