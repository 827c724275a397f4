"""Numerical reaction-diffusion solver for catalyst pellets: every steady state.

Problem (dimensionless, see ``service.physics.kinetics`` for the normalization)
---------------------------------------------------------------------------------
xi = r/L in [a, 1] (a = 0 for a full pellet, a = inner/outer radius for a ring),
u = c/c_ref, theta = T/T_ref with c_ref, T_ref the surface values (Dirichlet)
or the bulk values (external film), m = 0 slab, 1 cylinder, 2 sphere:

    (xi^m u')' = phi^2 xi^m F(u),   F(u) = f(u) exp(gamma (1 - 1/theta(u))),
    phi^2 = L^2 r(c_ref, T_ref) / (D_e c_ref),

    centre: u'(0) = 0 (a = 0) or u(a) = 1 (ring, both faces exposed);
    surface: u(1) = 1, or with a film u'(1) = Bi_m (1 - u(1)), Bi_m = k_m L / D_e.

Heat enters through the Prater relation (Prater 1958), theta = theta_s + beta (u_s - u),
with theta_s = 1 (no film) or theta_s = 1 + beta (Bi_m/Bi_h)(1 - u_s) (film; Bi_h = h L/lambda_e,
``heat_biot=None`` meaning no heat-film resistance). The problem is one equation in u.

Method
------
* Conservative finite volumes on a mesh xi(t) = 1 - expm1(alpha (1 - t))/expm1(alpha),
  t uniform, alpha = ln(phi_eff) for phi_eff > e (points crowd into the reaction zone
  of thickness ~1/phi_eff at the surface), damped Newton with a tridiagonal Jacobian
  (plus one bordered column for the thermal film), solved on n and 2n cells and
  Richardson-extrapolated (second-order scheme -> error estimate |eta_2n - eta_n|/3).
* Every steady state: where several can exist (f not monotone: strongly adsorbing
  Langmuir-Hinshelwood with exponent 2 and K c > 1, or exothermic beta*gamma > 0),
  the centre value is scanned: z = -ln(u(0) - u_eq) on a grid, each shot integrated
  from the centre in the stretched variable s = phi xi in (ln u, d ln u/ds) by a
  vectorized Runge-Kutta method, started from the analytic linear solution when
  u(0) - u_eq < 1e-8 (the centre value may be astronomically small). Without a film
  the shot gives the modulus phi(z) at which u reaches 1; with a film the Robin
  mismatch at s = phi. Each sign change of the mismatch is polished by the Newton
  solver seeded with the interpolated shot (``search='scan'``). The thermal problem with
  a film and Bi_m != Bi_h cannot be reduced to one shooting parameter: there the states
  of the Bi_m = Bi_h problem are continued in the ratio Bi_m/Bi_h to its true value
  (``search='continuation'``; NOT a guaranteed enumeration: a branch that folds away or
  appears on the way is lost; if none survives, pseudo-transient continuation returns
  a stable state). Monotone kinetics (f non-decreasing, no exothermic heat effect):
  unique state (``search='unique'``, stable by the comparison principle, eigenvalue -inf).
  Rings (both faces at surface conditions) with non-monotone kinetics or heat effects:
  shots off the inner face over its slope (sign changes of the mismatch at the outer
  face, refined near folds and next to shots that empty the wall), plus the states of
  the slab of half the wall continued in the curvature, plus the default start
  (``search='scan'``; a state whose minimum lies below ~1e-290 can only come from the
  last two, see ``_ring_states``).
* Stability: the leading eigenvalue of the linearized pseudo-transient problem
  du/dt = xi^-m (xi^m u')' - phi^2 F(u) (unit Lewis number, so the Prater relation also
  holds in time) on the finite-volume mesh; stable when it is negative.
  Headline state = the stable steady state with the largest eta (largest eta overall
  when none is stable).
* Closed forms: isothermal first order (and reversible first order) with a Dirichlet
  surface uses ``closed_form`` (and the analytic Robin relation with a film); zero order
  uses the analytic dead-zone solutions (slab, cylinder, sphere). ``force_numerical``
  bypasses both.
* Asymptotic: when the effective modulus exceeds 1e6 (isothermal, monotone kinetics,
  full pellet, Dirichlet surface) eta = (1/Phi)(1 - m/(2(m+1) Phi)) on the generalized
  modulus Phi (the curvature term is exact for first order: 3(coth phi - 1/phi)/phi and
  2 I1/(phi I0) expanded). The reported relative error bound is 1/Phi: the neglected
  terms are O(1/Phi) with a kinetics-dependent coefficient, and the numerical solutions
  at Phi = 1e3 give |eta Phi - 1| <= 4.5e-4 for every registered law and shape (tests),
  i.e. a coefficient below 0.5. Since the switch is at 1e6 the bound is below 1e-6.

Quantities reported
-------------------
eta = (pellet-volume-averaged rate) / (rate at the surface conditions c_s, T_s);
overall_effectiveness = (averaged rate) / (rate at bulk conditions) (film cases).
residual = max_i |R_i| / max_i S_i on the finer mesh, where R_i is the finite-volume
balance of cell i (flux out - flux in - phi^2 V_i F_i, V_i the cell volume in xi^m dxi)
and S_i = |flux in| + |flux out| + phi^2 V_i |F_i|. error_estimate = |eta_2n - eta_n|/3
relative to eta (the Richardson correction).

References
----------
1. Aris, R. (1975). The Mathematical Theory of Diffusion and Reaction in Permeable
   Catalysts, Vol. 1, Clarendon Press (dead zones, Ch. 3; multiplicity, Ch. 4).
2. Weisz, P. B., Hicks, J. S. (1962). Chem. Eng. Sci. 17, 265-275.
3. Prater, C. D. (1958). Chem. Eng. Sci. 8, 284-286.
4. Bischoff, K. B. (1965). AIChE J. 11, 351-355.
5. Patankar, S. V. (1980). Numerical Heat Transfer and Fluid Flow, Hemisphere, Ch. 4
   (finite-volume discretization); Richardson, L. F. (1911) extrapolation.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

import numpy as np
from scipy import optimize, special
from scipy.linalg import eigh_tridiagonal
from scipy.linalg.lapack import dgtsv

from . import closed_form
from .errors import PhysicsInputError
from .kinetics import (LangmuirHinshelwood, PowerLaw, ReversibleFirstOrder, generalized_from_thiele,
                       normalized_rate)

STATUS_MESSAGES: dict[str, str] = {
    "converged": "Numerical solution converged.",
    "closed_form": "Analytic solution used.",
    "asymptotic": "Large-modulus asymptotic result used (error bound reported).",
    "budget_exceeded": "The solver ran out of its time budget before finishing.",
    "not_converged": "The Newton iteration did not converge for any steady state.",
    "partially_converged": "Some steady states were found, but at least one candidate did not converge.",
}
SUCCESS_STATUSES = frozenset({"converged", "closed_form", "asymptotic", "partially_converged"})

_NEWTON_TOL = 1e-12
_ASYMPTOTIC_MODULUS = 1e6
_LINEAR_START = 1e-8
_DEAD_EPS = 1e-10  # orders below one: linear continuation of the rate below u = eps
_SCAN_STEP = 0.4  # RK4 step x (1 + |p| + sqrt(G)) in the stretched variable


@dataclass
class SteadyState:
    """One steady state. Concentrations [mol/m^3], temperatures [K] (None if isothermal).

    effectiveness_factor : eta relative to surface conditions [-].
    center_concentration, center_temperature : values at the centre (inner face for rings).
    stable : leading_eigenvalue < 0 (see module docstring; -inf when unique by monotonicity).
    overall_effectiveness, surface_concentration, surface_temperature : film cases only.
    error_estimate : Richardson estimate of the relative error of eta [-].
    residual : finite-volume residual (module docstring) [-].
    dead_zone_fraction : dead-core radius / L for orders below one, None without a dead core.
    """

    effectiveness_factor: float
    center_concentration: float
    stable: bool
    leading_eigenvalue: float
    center_temperature: float | None = None
    overall_effectiveness: float | None = None
    surface_concentration: float | None = None
    surface_temperature: float | None = None
    error_estimate: float = 0.0
    residual: float = 0.0
    dead_zone_fraction: float | None = None
    _xi: np.ndarray | None = field(default=None, repr=False)
    _u: np.ndarray | None = field(default=None, repr=False)


@dataclass
class ReactionDiffusionResult:
    """Solver result; see the module docstring for the definitions.

    success : status in SUCCESS_STATUSES; status : key of STATUS_MESSAGES; message : its text.
    effectiveness_factor, overall_effectiveness, dead_zone_fraction, residual, error_estimate :
    those of the headline state steady_states[headline_index] (the stable state with the
    largest eta). steady_states : every state found, sorted by increasing eta.
    nodes : mesh nodes of the finer mesh (0 for closed forms). method : 'numerical' |
    'asymptotic' | 'closed_form'. search : 'unique' | 'scan' | 'continuation' | 'single'.
    profile : {'position' xi [-], 'concentration' [mol/m^3], 'temperature' [K] or None}
    of the headline state on profile_points points (None when 0). thiele_modulus : phi [-]
    on L at the reference (surface or bulk) conditions. elapsed : wall time [s].
    """

    success: bool
    status: str
    message: str
    effectiveness_factor: float | None = None
    overall_effectiveness: float | None = None
    steady_states: list = field(default_factory=list)
    headline_index: int | None = None
    dead_zone_fraction: float | None = None
    residual: float | None = None
    error_estimate: float | None = None
    nodes: int = 0
    method: str = "numerical"
    search: str = "unique"
    profile: dict | None = None
    thiele_modulus: float | None = None
    elapsed: float = 0.0


class _Budget(Exception):
    pass


@dataclass
class _Problem:
    m: int
    a: float
    phi2: float
    norm: object
    beta: float = 0.0
    gamma: float = 0.0
    bi_m: float | None = None
    ratio: float = 0.0  # Bi_m / Bi_h
    deadline: float = math.inf
    us_guess: float = 1.0  # estimated surface value (film), used to grade the mesh

    @property
    def thermal(self):
        return self.beta != 0.0 and self.gamma != 0.0

    def check_time(self):
        if time.monotonic() > self.deadline:
            raise _Budget

    def theta(self, u, us):
        ts = 1.0 + self.beta * self.ratio * (1.0 - us)
        return np.maximum(ts + self.beta * (us - u), 1e-3)

    def __post_init__(self):
        law = self.norm.rate_law
        self.dead_order = law.order if isinstance(law, PowerLaw) and law.order < 1 else None
        self.eps = _DEAD_EPS

    def _f(self, u):
        f = self.norm.f(u)
        if self.dead_order is None:
            return f
        # orders below one: below u = eps the rate is continued linearly to 0 (bounded slope)
        return np.where(u < self.eps, np.maximum(u, 0.0) * self.eps ** (self.dead_order - 1), f)

    def _fp(self, u):
        fp = self.norm.dfdu(u) if self.dead_order is None else np.where(
            u < self.eps, (u > 0) * self.eps ** (self.dead_order - 1),
            self.dead_order * np.maximum(u, self.eps) ** (self.dead_order - 1))
        return fp

    def F(self, u, us=1.0):
        f = self._f(u)
        if not self.thermal:
            return f
        return f * np.exp(self.gamma * (1.0 - 1.0 / self.theta(u, us)))

    def dF(self, u, us=1.0):
        """(dF/du at fixed us, dF/dus)."""
        fp = self._fp(u)
        if not self.thermal:
            return fp, 0.0
        th = self.theta(u, us)
        A = np.exp(self.gamma * (1.0 - 1.0 / th))
        f = self._f(u)
        g = f * A * self.gamma / th**2
        return fp * A - self.beta * g, self.beta * (1.0 - self.ratio) * g


# ---------------------------------------------------------------- mesh and Newton
def _crowd(t, alpha):
    """Map of [0, 1] onto itself crowding points towards 1 (spacing ratio ~ e^-alpha)."""
    if alpha <= 1e-8:
        return t
    return 1.0 - np.expm1(alpha * (1.0 - t)) / np.expm1(alpha)


def _mesh(n, a, alpha):
    t = np.linspace(0.0, 1.0, n + 1)
    if a > 0:  # ring: reaction zones at both faces
        x = np.where(t <= 0.5, 0.5 * (1.0 - _crowd(1.0 - 2.0 * t, alpha)),
                     0.5 + 0.5 * _crowd(np.maximum(2.0 * t - 1.0, 0.0), alpha))
    else:
        x = _crowd(t, alpha)
    xi = a + (1.0 - a) * x
    xi[-1] = 1.0
    return xi


def _geometry(xi, m):
    mid = 0.5 * (xi[1:] + xi[:-1])
    G = mid**m / np.diff(xi)
    edges = np.concatenate(([xi[0]], mid, [1.0]))
    V = np.diff(edges ** (m + 1)) / (m + 1)
    return G, V


def _newton(prob, xi, u, max_iter=60, ptc=False):
    """Damped Newton on the finite-volume system; returns (u, residual, converged).

    The unknown is the deficit w = 1 - u, so fluxes keep full relative precision
    when u is close to 1 (small moduli). With ``ptc`` the iteration is pseudo-transient
    continuation (Kelley & Keyes 1998): J + V/dt, dt grown as the residual falls, which
    reaches a stable state from a poor start where plain Newton fails."""
    m, phi2 = prob.m, prob.phi2
    G, V = _geometry(xi, m)
    n = len(xi) - 1
    robin = prob.bi_m is not None
    lo = 1 if prob.a > 0 else 0
    hi = n + 1 if robin else n  # unknowns w[lo:hi]
    bordered = robin and prob.thermal and prob.ratio != 1.0
    shift = 0.0 if prob.dead_order is not None else 1.0  # dead zones need u itself near 0
    w = shift - np.asarray(u, dtype=float)

    def residual(w):
        u = shift - w
        us = u[-1] if robin else 1.0
        flux = -G * np.diff(w)
        src = phi2 * V * prob.F(u, us)
        R = np.zeros(n + 1)
        R[:n] += flux
        R[1:] -= flux
        R -= src
        if robin:
            R[n] += prob.bi_m * (1.0 - shift + w[n])
        scale = np.zeros(n + 1)
        scale[:n] += np.abs(flux)
        scale[1:] += np.abs(flux)
        scale += np.abs(src)
        Rk = R[lo:hi]
        return Rk, float(np.max(np.abs(Rk)) / max(np.max(scale[lo:hi]), 1e-300))

    Rk, res = residual(w)
    dt = 1e-2 / max(phi2, 1.0)
    if ptc:
        max_iter = 150
    for _ in range(max_iter):
        prob.check_time()
        if res < _NEWTON_TOL:
            return shift - w, res, True
        u = shift - w
        us = u[-1] if robin else 1.0
        dFu, dFs = prob.dF(u, us)
        diag = phi2 * V * dFu  # dR/dw = -dR/du
        diag[:n] += G
        diag[1:] += G
        if robin:
            diag[n] += prob.bi_m
        d = diag[lo:hi].copy()
        if ptc and res > 1e-6:
            d += V[lo:hi] / dt
        off = -G[lo:hi - 1]
        if bordered:  # tridiagonal + the column of u_s = u_n (Sherman-Morrison, two solves)
            col = (phi2 * V * dFs)[lo:hi]  # every rate depends on u_s through theta
            rhs = np.column_stack((-Rk, col))
        else:
            rhs = -Rk
        _, _, _, x, info = dgtsv(off.copy(), d, off.copy(), rhs)
        if info != 0 or not np.all(np.isfinite(x)):
            return shift - w, res, False
        if bordered:
            y, z = x[:, 0], x[:, 1]
            step = y - z * (y[-1] / (1.0 + z[-1]))
        else:
            step = x
        if np.max(np.abs(step)) <= 1e-15 * (1.0 + np.max(np.abs(w))):
            return shift - w, res, True  # round-off floor reached
        if ptc:  # switched evolution relaxation: accept the step, adapt dt
            trial = w.copy()
            trial[lo:hi] += step
            Rt, rt = residual(trial)
            if not np.isfinite(rt):
                dt *= 0.1
                continue
            dt *= min(max(res / max(rt, 1e-300), 0.2), 10.0)
            w, Rk, res = trial, Rt, rt
            continue
        lam = 1.0
        for _ in range(30):
            trial = w.copy()
            trial[lo:hi] += lam * step
            Rt, rt = residual(trial)
            if np.isfinite(rt) and (rt < (1.0 - 0.25 * lam) * res or rt < _NEWTON_TOL):
                break
            lam *= 0.5
        else:
            return shift - w, res, res < 1e-8  # slow final convergence: accepted, residual reported
        w, Rk, res = trial, Rt, rt
    return shift - w, res, res < 1e-8  # slow final convergence: accepted, residual reported


def _eta_of(prob, xi, u):
    """(eta relative to surface conditions, overall eta relative to reference)."""
    _, V = _geometry(xi, prob.m)
    us = u[-1] if prob.bi_m is not None else 1.0
    mean = float(np.sum(V * prob.F(u, us))) * (prob.m + 1) / (1.0 - prob.a ** (prob.m + 1))
    Fs = float(prob.F(np.array([us]), us)[0])
    return mean / Fs, mean


def _alpha_for(prob):
    ue = prob.norm.u_eq
    grid = np.linspace(ue, 1.0, 41)[1:]
    if prob.us_guess < 1.0:
        grid = np.concatenate((grid, [prob.us_guess]))
    slope = max(float(np.max(np.abs(prob.F(grid) / (grid - ue)))), _linear_coefficient(prob))
    phi_eff = math.sqrt(prob.phi2 * max(slope, 1.0))
    return min(max(math.log(phi_eff) - 1.0, 0.0), 20.0) if phi_eff > math.e else 0.0, phi_eff


def _solve_on_meshes(prob, seed, n=None, allow_ptc=True):
    """Newton on n and 2n cells from a seed u(xi) callable; returns a state dict or None."""
    alpha, phi_eff = _alpha_for(prob)
    if n is None:
        n = 100 if phi_eff < 30 else 300
    results = []
    u = None
    for cells in (n, 2 * n):
        xi = _mesh(cells, prob.a, alpha)
        if u is None:
            u0 = seed(xi)
        else:
            u0 = np.interp(xi, results[-1][0], results[-1][1])
        if prob.a > 0:
            u0[0] = 1.0
        if prob.bi_m is None:
            u0[-1] = 1.0
        if prob.dead_order is not None and cells == n:
            # dead zone: continuation in the regularization eps (1e-2 -> 1e-9, factors of 10)
            for eps in (1e-2, 1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8, 1e-9):
                prob.eps = eps
                u1, _, ok1 = _newton(prob, xi, u0)
                if not ok1:
                    u1, _, ok1 = _newton(prob, xi, u0, ptc=True)
                if ok1:
                    u0 = u1
            prob.eps = _DEAD_EPS
        u, res, ok = _newton(prob, xi, u0)
        if not ok and allow_ptc:
            u, res, ok = _newton(prob, xi, u0, ptc=True)
        if not ok:
            return None
        results.append((xi, u, res))
    (x1, u1, _), (x2, u2, res2) = results
    e1, o1 = _eta_of(prob, x1, u1)
    e2, o2 = _eta_of(prob, x2, u2)
    eta = (4 * e2 - e1) / 3.0
    overall = (4 * o2 - o1) / 3.0
    ends = [(4 * u2[k] - u1[k]) / 3.0 for k in (0, -1)]  # centre and surface, extrapolated
    if not (ends[0] > 0.5 * u2[0]):  # extrapolation unreliable for (nearly) vanishing values
        ends[0] = u2[0]
    return dict(xi=x2, u=u2, xi_coarse=x1, u_coarse=u1, eta=eta, overall=overall, residual=res2,
                u_center=ends[0], u_surface=ends[1],
                error=abs(e2 - e1) / 3.0 / max(abs(eta), 1e-300), nodes=len(x2))


def _leading_eigenvalue(prob, xi, u):
    """Leading eigenvalue of the linearized finite-volume problem M dw/dt = J w (M = cell
    volumes): symmetric tridiagonal, or, for the thermal film (Bi_m != Bi_h), tridiagonal plus
    the u_s column, evaluated densely on an 80-cell mesh (cost bound)."""
    if prob.bi_m is not None and prob.thermal and prob.ratio != 1.0 and len(xi) > 81:
        coarse = _mesh(80, prob.a, _alpha_for(prob)[0])
        u = np.interp(coarse, xi, u)
        xi = coarse
    G, V = _geometry(xi, prob.m)
    n = len(xi) - 1
    robin = prob.bi_m is not None
    lo = 1 if prob.a > 0 else 0
    hi = n + 1 if robin else n
    us = u[-1] if robin else 1.0
    dFu, dFs = prob.dF(u, us)
    diag = -prob.phi2 * V * dFu
    diag[:n] -= G
    diag[1:] -= G
    if robin:
        diag[n] -= prob.bi_m
    d, off, Vk = diag[lo:hi], G[lo:hi - 1], V[lo:hi]
    if robin and prob.thermal and prob.ratio != 1.0:
        J = np.diag(d) + np.diag(off, 1) + np.diag(off, -1)
        J[:, -1] += (-prob.phi2 * V * dFs)[lo:hi]
        J /= Vk[:, None]
        return float(np.max(np.linalg.eigvals(J).real))
    s = np.sqrt(Vk)
    w = eigh_tridiagonal(d / Vk, off / (s[:-1] * s[1:]), eigvals_only=True,
                         select="i", select_range=(hi - lo - 1, hi - lo - 1))
    return float(w[0])


def _dead_zone(prob, xi, u):
    """Dead-core radius fraction for power law orders below one (None if none)."""
    law = prob.norm.rate_law
    if not (isinstance(law, PowerLaw) and law.order < 1) or prob.a > 0:
        return None
    pos = np.nonzero(u > 1e-4)[0]  # well above the regularization eps, still on the power-law front
    if len(pos) == 0 or pos[0] == 0:
        return None
    i = pos[0]
    if i + 1 >= len(u):
        return float(xi[i - 1])
    k = (1.0 - law.order) / 2.0  # u ~ C (xi - xi_d)^(1/k) near the front
    q = (u[i] / u[i + 1]) ** k
    xd = (xi[i] - q * xi[i + 1]) / (1.0 - q)
    return float(min(max(xd, 0.0), xi[i]))


def _seed_default(prob):
    """First-order-like profile with an effective modulus; with a film the surface value
    is first estimated from Bi_m (1 - u_s) = min(phi sqrt(2 int_{u_eq}^{u_s} F du),
    phi^2 F(u_s)/(m+1)) (large-modulus first integral, or the kinetic limit)."""
    ue, m = prob.norm.u_eq, prob.m
    us = 1.0
    if prob.bi_m is not None and not prob.thermal:
        phi = math.sqrt(prob.phi2)

        def mismatch(x):
            flux = min(phi * math.sqrt(2.0 * max(prob.norm.integral(ue, x), 0.0)),
                       prob.phi2 * float(prob.norm.f(x)) / (m + 1))
            return prob.bi_m * (1.0 - x) - flux

        us = optimize.brentq(mismatch, ue, 1.0, xtol=1e-14) if mismatch(ue + 1e-300) > 0 > mismatch(1.0) else 1.0
        prob.us_guess = max(us, ue + 1e-12)
    plain = prob.norm.is_monotone() and not prob.thermal and prob.dead_order is None
    if plain:
        slope = float(prob.dF(np.array([us]))[0][0])
    else:
        slope = float(prob.F(np.array([us]))[0]) / max(us - ue, 1e-300)
    phi_eff = math.sqrt(prob.phi2 * max(slope, 1e-3) / (1.0 - ue))

    def seed(xi):
        if prob.a > 0:
            return np.ones_like(xi)
        return ue + (us - ue) * closed_form.profile_first_order(xi, phi_eff, m)

    return seed


# ---------------------------------------------------------------- multiplicity scan
def _linear_log_growth(m, x):
    """(ln i_m(x), d ln i_m/dx) for the linear solution i_m = cosh, I0, sinh(x)/x."""
    x = np.maximum(x, 1e-12)
    if m == 0:
        return x + np.log1p(np.exp(-2 * x)) - math.log(2.0), np.tanh(x)
    if m == 1:
        return np.log(special.i0e(x)) + x, special.i1e(x) / special.i0e(x)
    e = -np.expm1(-2 * x)
    return x + np.log(e / (2 * x)), (1 + np.exp(-2 * x)) / e - 1.0 / x


def _rate_over_excess(prob):
    """G(v) = F(u)/(u - u_eq) with u = u_eq + e^v, written without 0/0 (fast path for the scan)."""
    law, ue, cs = prob.norm.rate_law, prob.norm.u_eq, prob.norm.surface_concentration
    if isinstance(law, LangmuirHinshelwood):
        kc = law.adsorption_constant * cs
        iso = lambda u, y: ((1.0 + kc) / (1.0 + kc * u)) ** law.exponent
    elif isinstance(law, PowerLaw) and ue == 0.0:
        iso = lambda u, y: y ** (law.order - 1.0)
    elif isinstance(law, ReversibleFirstOrder):
        iso = lambda u, y: 1.0 / (1.0 - ue)
    else:
        iso = lambda u, y: prob.F(u, 1.0) / y
    beta, gamma = prob.beta, prob.gamma

    def G(v):
        y = np.exp(v)
        u = ue + y
        g = iso(u, y)
        if prob.thermal:
            g = g * np.exp(gamma * beta * (1.0 - u) / np.maximum(1.0 + beta * (1.0 - u), 1e-3))
        return g

    return G


def _scan(prob, zs, s_stop=None):
    """Integrate shots from the centre, y = u - u_eq = exp(-z) at xi = 0, in s = phi xi.

    Returns (end_s, end_v, end_p, hist) where the shot stops when u reaches 1 (no film,
    s_stop None) or at s = s_stop (film). hist = list of (s, v) arrays per step.
    """
    m, ue = prob.m, prob.norm.u_eq
    K = len(zs)
    top = math.log(1.0 - ue)
    G = _rate_over_excess(prob)
    a = _linear_coefficient(prob)
    v = -np.asarray(zs, dtype=float)
    s = np.zeros(K)
    p = np.zeros(K)
    lin_v = math.log(_LINEAR_START)
    if a > 0:
        late = v < lin_v
        if np.any(late):
            target = lin_v - v[late]  # ln i_m(sqrt(a) s1) = target
            lo_, hi_ = np.zeros_like(target), target + 50.0
            for _ in range(60):
                mid = 0.5 * (lo_ + hi_)
                low = _linear_log_growth(m, mid)[0] < target
                lo_, hi_ = np.where(low, mid, lo_), np.where(low, hi_, mid)
            x = 0.5 * (lo_ + hi_)
            s[late] = x / math.sqrt(a)
            v[late] = lin_v
            p[late] = math.sqrt(a) * _linear_log_growth(m, x)[1]
    # series start near the centre for the rest
    g0 = G(v)
    s0 = 1e-4 / (1.0 + np.sqrt(g0))
    start = s == 0
    s = np.where(start, s0, s)
    p = np.where(start, g0 * s0 / (m + 1), p)
    v = np.where(start, v + 0.5 * g0 * s0**2 / (m + 1), v)
    active = np.ones(K, bool)
    end_s, end_v, end_p = s.copy(), v.copy(), p.copy()
    if s_stop is not None:
        beyond = s >= s_stop
        if np.any(beyond):  # entirely linear at the surface
            x = math.sqrt(a) * s_stop
            lg, dl = _linear_log_growth(m, np.array([x]))
            x1 = math.sqrt(a) * s[beyond]
            lg1, _ = _linear_log_growth(m, x1)
            end_v[beyond] = v[beyond] + lg[0] - lg1
            end_p[beyond] = math.sqrt(a) * dl[0]
            end_s[beyond] = s_stop
            active &= ~beyond
    hist = [(s.copy(), v.copy())]
    limit = top + math.log(4.0)

    for step in range(20000):
        if step % 16 == 0:
            prob.check_time()
            if not active.any():
                break
        g = G(v)
        h = np.minimum(_SCAN_STEP / (1.0 + np.abs(p) + np.sqrt(g)), 0.5 * s)
        if s_stop is not None:
            h = np.minimum(h, s_stop - s)
        h *= active  # finished shots stay put (h = 0 leaves them unchanged)
        vn, pn = _rk4_step(G, m, s, v, p, g, h)
        sn = s + h
        if s_stop is None:
            done = active & (vn >= top)
            if done.any():  # linear interpolation of the crossing
                w = (top - v[done]) / np.maximum(vn[done] - v[done], 1e-300)
                end_s[done] = s[done] + w * h[done]
                end_p[done] = p[done] + w * (pn[done] - p[done])
                end_v[done] = top
                sn[done], vn[done] = end_s[done], top
        else:
            done = active & ((sn >= s_stop * (1 - 1e-14)) | (vn >= limit))
            end_s[done], end_v[done], end_p[done] = sn[done], vn[done], pn[done]
        active &= ~done
        s, v, p = sn, vn, pn
        hist.append((s, v))
    return end_s, end_v, end_p, hist


def _rk4_step(G, m, s, v, p, g, h):
    """One classical Runge-Kutta step of v' = p, p' = G(v) - p^2 - m p / s (the shooting
    equations in v = ln(u - u_eq), s = phi xi) from s to s + h; g = G(v)."""
    hh = 0.5 * h
    k1p = g - p * p - m * p / s
    p2 = p + hh * k1p
    v2 = v + hh * p
    k2p = G(v2) - p2 * p2 - m * p2 / (s + hh)
    p3 = p + hh * k2p
    v3 = v + hh * p2
    k3p = G(v3) - p3 * p3 - m * p3 / (s + hh)
    p4 = p + h * k3p
    v4 = v + h * p3
    k4p = G(v4) - p4 * p4 - m * p4 / (s + h)
    return v + h / 6 * (p + 2 * p2 + 2 * p3 + p4), p + h / 6 * (k1p + 2 * k2p + 2 * k3p + k4p)


def _shot_seed(prob, hist, k, k2, w, s_scale, s_end=None):
    """Seed u(xi) from shots k, k2 (weights 1-w, w); xi maps to s = xi * s_scale, or, with
    s_end, to s = s_end - s_scale (1 - xi) (surface-aligned: a root beyond the scan)."""
    S = np.array([h[0] for h in hist])
    Vv = np.array([h[1] for h in hist])
    ue = prob.norm.u_eq

    ra = math.sqrt(max(_linear_coefficient(prob), 0.0))

    def one(j, s):
        sj, vj = S[:, j], Vv[:, j]
        keep = np.concatenate(([True], np.diff(sj) > 0))
        v = np.interp(s, sj[keep], vj[keep])
        core = s < sj[0]
        if ra > 0 and np.any(core):  # analytic linear core of the shot
            v[core] = vj[0] + _linear_log_growth(prob.m, ra * s[core])[0] \
                - _linear_log_growth(prob.m, np.array([ra * sj[0]]))[0][0]
        return v

    def seed(xi):
        s = xi * s_scale if s_end is None else np.maximum(s_end - s_scale * (1.0 - xi), 1e-12)
        v = (1 - w) * one(k, s) + w * one(k2, s)
        return ue + np.exp(np.minimum(v, 0.7))

    return seed


def _linear_coefficient(prob):
    """a = lim F(u)/(u - u_eq) as u -> u_eq (0 when F is not linear there)."""
    if prob.norm.linear_coefficient() is None:
        return 0.0
    y = 1e-300
    return float(prob.F(np.array([prob.norm.u_eq + y]), 1.0)[0] / y)


def _z_grid(prob, phi=None):
    """Shots: z = -ln(u(0) - u_eq). Up to u(0) - u_eq = 1e-8 directly; beyond, the shots
    are placed by the length s1 of their analytic linear core, s1 up to 40 + 20/sqrt(a),
    past which the modulus grows linearly with z (no further turning points). With a film
    (``phi`` given) the cores also cover s1 in [phi - 60, phi + 5], where the surface
    states of a film-limited pellet lie."""
    top = -math.log(1.0 - prob.norm.u_eq)
    lin = -math.log(_LINEAR_START)
    near = top + np.concatenate((np.geomspace(1e-3, 2.0, 22, endpoint=False),
                                 np.linspace(2.0, lin - top, 12, endpoint=False)))
    a = _linear_coefficient(prob)
    if a <= 0:
        return np.concatenate((near, np.linspace(lin, 60.0, 12)))
    s1 = np.geomspace(1e-2 / math.sqrt(a), 40.0 + 20.0 / math.sqrt(a), 20)
    if phi is not None:
        extra = phi + 5.0 - np.geomspace(1.0, 65.0, 24)
        s1 = np.unique(np.concatenate((s1, extra[extra > s1[0]], [phi + 5.0])))
    return np.concatenate((near, [lin], lin + _linear_log_growth(prob.m, math.sqrt(a) * s1)[0]))


def _refine_turning_points(prob, zs, d, phi, mismatch, scan_options, points=33):
    """Seeds from a finer scan around each turning point of the mismatch d(z).

    Near a fold two states lie close together: a coarse grid can step over both (no
    sign change between neighbours), or give two seeds so close that Newton lands both
    on one state. Wherever d has a local extremum near zero (|d| below a tenth of the
    largest neighbouring step), the interval of its two neighbours is scanned again on
    ``points`` shots and every sign change there seeds the Newton solver.
    """
    seeds = []
    for k in range(1, len(zs) - 1):
        turning = (d[k] - d[k - 1]) * (d[k + 1] - d[k]) < 0
        step = max(abs(d[k] - d[k - 1]), abs(d[k + 1] - d[k]))
        if not turning or abs(d[k]) > 10.0 * step:
            continue
        prob.check_time()
        fine = np.linspace(zs[k - 1], zs[k + 1], points)
        out = _scan(prob, fine, **scan_options)
        df = mismatch(out)
        for j in range(points - 1):
            if df[j] == 0 or df[j] * df[j + 1] < 0:
                w = df[j] / (df[j] - df[j + 1])
                seeds.append(_shot_seed(prob, out[3], j, j + 1, w, phi))
    return seeds


def _find_states(prob, phi):
    """All steady states; returns (list of state dicts, search label, failures)."""
    zs = _z_grid(prob, None if prob.bi_m is None else phi)
    seeds, tail = [], True
    if prob.bi_m is None:
        end_s, _, _, hist = _scan(prob, zs)
        d = end_s - phi
        tail = d[-1] < 0  # a root beyond the scanned range: seeded by the last shot, surface-aligned
        if tail:
            K = len(zs) - 1
            seeds.append(_shot_seed(prob, hist, K, K, 0.0, phi, s_end=end_s[K]))
        for k in range(len(zs) - 1):
            if d[k] == 0 or d[k] * d[k + 1] < 0:
                w = d[k] / (d[k] - d[k + 1])
                seeds.append(_shot_seed(prob, hist, k, k + 1, w, phi))
        seeds += _refine_turning_points(prob, zs, d, phi, lambda out: out[0] - phi, {})
        search = "scan"
    elif not prob.thermal or prob.ratio == 1.0:
        end_s, end_v, end_p, hist = _scan(prob, zs, s_stop=phi)
        ue = prob.norm.u_eq

        def robin(out):
            y_ = np.exp(out[1])
            return np.where(out[0] >= phi * (1 - 1e-12),
                            phi * y_ * out[2] - prob.bi_m * (1 - ue - y_), 1.0)

        d = robin((end_s, end_v, end_p))
        for k in range(len(zs) - 1):
            if d[k] == 0 or d[k] * d[k + 1] < 0:
                w = d[k] / (d[k] - d[k + 1])
                seeds.append(_shot_seed(prob, hist, k, k + 1, w, phi))
        seeds += _refine_turning_points(prob, zs, d, phi, robin, {"s_stop": phi})
        search = "scan"
    else:
        # thermal film with Bi_m != Bi_h: states of the Bi_m = Bi_h problem (exact scan above),
        # followed by natural continuation in the ratio Bi_m/Bi_h to its true value
        return _continue_in_ratio(prob, phi)
    if tail or not seeds:
        seeds.append(_seed_default(prob))
    states, failures = [], 0
    for seed in seeds:
        prob.check_time()
        st = _solve_on_meshes(prob, seed)
        if st is None:
            failures += 1
            continue
        if not any(_same(st, o) for o in states):
            states.append(st)
    return states, search, failures


def _continue_in_ratio(prob, phi, steps=6):
    target = prob.ratio
    prob.ratio = 1.0
    try:
        start, _, failures = _find_states(prob, phi)
    finally:
        prob.ratio = target
    states = []
    for st in start:
        xi, u, ok = st["xi"], st["u"], True
        for k in range(1, steps + 1):
            prob.ratio = 1.0 + (target - 1.0) * k / steps
            u_k = np.interp(xi, st["xi"], u)
            sol = _solve_on_meshes(prob, lambda x, xi=xi, u=u_k: np.interp(x, xi, u), allow_ptc=False)
            if sol is None:
                ok = False
                break
            xi, u, st = sol["xi"], sol["u"], sol
        prob.ratio = target
        if not ok:
            failures += 1
        elif not any(_same(st, o) for o in states):
            states.append(st)
    if not states:  # fallback: pseudo-transient continuation reaches a stable state
        for seed in [_seed_default(prob)] + [lambda x, st=st: np.interp(x, st["xi"], st["u"]) for st in start]:
            prob.check_time()
            st = _solve_on_meshes(prob, seed)
            if st is not None and not any(_same(st, o) for o in states):
                states.append(st)
    return states, "continuation", failures


def _ring_shots(prob, phi, points=160):
    """Seeds for the states of a ring from shots off its inner face.

    Each shot starts at s = phi a (s = phi xi) with u = 1 and a slope q of v = ln(u - u_eq)
    and is integrated outwards in (v, dv/ds) by the RK4 steps of ``_scan`` to s = phi; the
    states are the sign changes of v(phi) - ln(1 - u_eq) over q (a shot that empties the
    wall, u - u_eq < 1e-290, counts as falling short). The slopes run from -1e-4 to past
    the steepest the surface rate allows; around each turning point of the mismatch that
    comes near zero the slopes are scanned again finer (two states close to a fold). A
    state whose minimum lies below ~1e-290 is not resolved by the shots (``_ring_states``
    adds the other starts for it).
    """
    ue = prob.norm.u_eq
    G = _rate_over_excess(prob)
    top = math.log(1.0 - ue)
    g_max = float(np.max(G(np.log(np.linspace(1e-6, 1.0, 200) * (1.0 - ue)))))
    qs = -np.geomspace(1e-4, 4.0 * math.sqrt(max(g_max, 1e-12)) + 4.0, points)
    d, S, V = _ring_fire(prob, phi, qs, G, top, g_max)
    seeds = _ring_seeds(d, S, V, phi, ue, top)
    for k in range(points - 1):
        if np.isfinite(d[k]) != np.isfinite(d[k + 1]) and d[k] * d[k + 1] < 0:
            # a state between a shot that reaches the far face and one that empties the
            # wall: its minimum is small; the slopes in between, again, finer
            fine = np.linspace(qs[k], qs[k + 1], 65)
            seeds += _ring_seeds(*_ring_fire(prob, phi, fine, G, top, g_max), phi, ue, top)
        if k == 0 or not np.all(np.isfinite(d[k - 1:k + 2])):
            continue
        turning = (d[k] - d[k - 1]) * (d[k + 1] - d[k]) < 0
        step = max(abs(d[k] - d[k - 1]), abs(d[k + 1] - d[k]))
        if turning and abs(d[k]) <= 10.0 * step:
            fine = np.linspace(qs[k - 1], qs[k + 1], 33)
            seeds += _ring_seeds(*_ring_fire(prob, phi, fine, G, top, g_max), phi, ue, top)
    return seeds


def _ring_fire(prob, phi, qs, G, top, g_max):
    """The shots of ``_ring_shots`` for the slopes qs: (mismatch, s and v histories).

    A shot below the surface value whose slope p is steeper than sqrt(2 g_max) + m/s + 1
    (g_max bounds G) can only steepen (p' = G - p^2 - m p/s < 0): it empties the wall or
    ends below the surface value, and is counted as emptied at once (its last steps
    would otherwise shrink geometrically)."""
    m, points = prob.m, len(qs)
    floor = math.log(1e-290)
    s = np.full(points, phi * prob.a)
    v = np.full(points, top)
    p = np.asarray(qs, dtype=float).copy()
    active = np.ones(points, bool)
    end_v = np.full(points, np.nan)
    hist = [(s.copy(), v.copy())]
    for step in range(40000):
        if step % 16 == 0:
            prob.check_time()
            if not active.any():
                break
        rising = p > 0
        with np.errstate(all="ignore"):  # finished shots may hold extreme values; they stay put
            g = G(v)
            h = np.minimum(_SCAN_STEP / (1.0 + np.abs(p) + np.sqrt(g)), phi - s)
            vn, pn = _rk4_step(G, m, s, v, p, g, h)
            v, p = np.where(active, vn, v), np.where(active, pn, p)
        s = np.where(active, s + h, s)
        # a step that overflowed: the shot was shooting up (or down) past any state
        lost = active & ~(np.isfinite(v) & np.isfinite(p) & np.isfinite(s))
        with np.errstate(all="ignore"):
            doomed = ~lost & (v < top) & (p < -(math.sqrt(2.0 * g_max) + m / s + 1.0))
        emptied = active & ((lost & ~rising) | (~lost & (v < floor)) | doomed)
        high = active & ((lost & rising) | (~lost & (v > top + math.log(4.0))))
        done = active & ~lost & ~emptied & ~high & (s >= phi * (1 - 1e-14))
        end_v[emptied] = -np.inf
        end_v[high] = np.inf
        end_v[done] = v[done]
        active &= ~(emptied | high | done)
        hist.append((s.copy(), v.copy()))
    S = np.array([h_[0] for h_ in hist])
    V = np.array([h_[1] for h_ in hist])
    return end_v - top, S, V


def _ring_seeds(d, S, V, phi, ue, top):
    """A seed u(xi) for every sign change of the mismatch d between neighbouring shots
    (their profiles blended by the linear interpolation of the root)."""
    seeds = []
    for k in range(len(d) - 1):
        if np.isfinite(d[k]) and np.isfinite(d[k + 1]) and d[k] * d[k + 1] <= 0:
            w = d[k] / (d[k] - d[k + 1]) if d[k] != d[k + 1] else 0.0
        elif np.isfinite(d[k]) != np.isfinite(d[k + 1]) and d[k] * d[k + 1] < 0:
            w = 0.0 if np.isfinite(d[k]) else 1.0  # next to a shot that empties: the other
        else:
            continue

        def seed(xi, k=k, w=w):
            x = phi * xi
            if w in (0.0, 1.0):
                j = k if w == 0.0 else k + 1
                v = np.interp(x, S[:, j], V[:, j])
            else:
                v = (1 - w) * np.interp(x, S[:, k], V[:, k]) + w * np.interp(x, S[:, k + 1],
                                                                            V[:, k + 1])
            return ue + np.exp(np.minimum(v, top))

        seeds.append(seed)
    return seeds


def _ring_states(prob, steps=4):
    """Steady states of a ring (both faces at surface conditions) with kinetics that may
    have several, from three kinds of start, each polished by Newton on the ring:

    * shots off the inner face (``_ring_shots``), which find every state whose minimum
      concentration they resolve;
    * the states of the slab of half-thickness w = (1 - a)/2 (enumerated by the shooting
      scan) continued in the curvature: with the curvature term scaled by lam,
      (xi^lam u')' = xi^lam phi^2 F(u) on [a, 1] is that slab at lam = 0 and the ring at
      lam = 1, taken in ``steps`` steps, halved where Newton fails;
    * the default start.

    A state missed by all three is possible only when its minimum lies below ~1e-290 and
    no slab branch leads to it; a slab branch lost on the way counts as a failure
    (SOLVER_PARTIAL).
    """
    a = prob.a
    phi = math.sqrt(prob.phi2)
    w, middle = 0.5 * (1.0 - a), 0.5 * (1.0 + a)
    slab = _Problem(0, 0.0, prob.phi2 * w * w, prob.norm, prob.beta, prob.gamma,
                    deadline=prob.deadline)
    slab_states, _, failures = _find_states(slab, math.sqrt(slab.phi2))
    states = []
    for seed in _ring_shots(prob, phi):
        prob.check_time()
        st = _solve_on_meshes(prob, seed)
        if st is not None and not any(_same(st, o) for o in states):
            states.append(st)
    try:
        for st in slab_states:
            prob.m = 0.0
            sol = _solve_on_meshes(prob, lambda x, st=st: np.interp(
                np.abs(x - middle) / w, st["xi"], st["u"]), allow_ptc=False)
            lam, step = 0.0, 1.0 / steps
            while sol is not None and lam < 1.0:
                prob.check_time()
                prob.m = min(1.0, lam + step)
                nxt = _solve_on_meshes(prob, lambda x, sol=sol: np.interp(x, sol["xi"], sol["u"]),
                                       allow_ptc=False)
                if nxt is not None:
                    sol, lam = nxt, prob.m
                elif step > 1.0 / (16 * steps):
                    step *= 0.5
                else:
                    sol = None
            if sol is None:
                failures += 1
            elif not any(_same(sol, o) for o in states):
                states.append(sol)
        prob.m = 1
        st = _solve_on_meshes(prob, _seed_default(prob))
        if st is not None and not any(_same(st, o) for o in states):
            states.append(st)
        if st is None and not states:
            failures += 1
    finally:
        prob.m = 1
    return sorted(states, key=lambda st: st["eta"]), "scan", failures


def _same(s1, s2):
    middle = 0.5 * (s1["xi"][0] + 1.0)  # the wall's middle (0.5 for a full pellet)
    c1 = np.interp(middle, s1["xi"], s1["u"]), s1["u"][0]
    c2 = np.interp(middle, s2["xi"], s2["u"]), s2["u"][0]
    return (abs(s1["eta"] - s2["eta"]) <= 1e-6 * max(abs(s1["eta"]), 1e-300)
            and all(abs(x - y) <= 1e-6 * max(abs(x), abs(y), 1e-30) for x, y in zip(c1, c2)))


# ---------------------------------------------------------------- analytic paths
def zero_order_dead_zone_fraction(phi, shape_exponent):
    """Dead-core radius xi_d [-] of a zero-order reaction (0 if phi^2 <= 2(m+1)).

    slab: xi_d = 1 - sqrt(2)/phi; sphere: (1 - xi_d)^2 (1 + 2 xi_d) = 6/phi^2;
    cylinder: 1 - xi_d^2 + 2 xi_d^2 ln xi_d = 4/phi^2 (Aris 1975, Ch. 3).
    """
    m, p2 = shape_exponent, float(phi) ** 2
    if p2 <= 2 * (m + 1):
        return 0.0
    if m == 0:
        return 1.0 - math.sqrt(2.0 / p2)
    if m == 2:
        g = lambda x: (1 - x) ** 2 * (1 + 2 * x) - 6.0 / p2
    else:
        g = lambda x: 1 - x * x + 2 * x * x * math.log(x) - 4.0 / p2 if x > 0 else 1 - 4.0 / p2
    return optimize.brentq(g, 0.0, 1.0, xtol=1e-16, rtol=1e-15)


def zero_order_profile(xi, phi, shape_exponent):
    """u = c/c_s of a zero-order reaction with a possible dead core (Aris 1975, Ch. 3)."""
    m, p2 = shape_exponent, float(phi) ** 2
    xi = np.asarray(xi, dtype=float)
    xd = zero_order_dead_zone_fraction(phi, m)
    if xd == 0.0:
        return 1.0 - p2 * (1.0 - xi**2) / (2 * (m + 1))
    x = np.maximum(xi, xd)
    if m == 0:
        return p2 * (x - xd) ** 2 / 2
    if m == 2:
        return p2 / 3 * (x**2 / 2 + xd**3 / x - 1.5 * xd**2)
    return p2 / 2 * ((x**2 - xd**2) / 2 - xd**2 * np.log(x / xd))


# ---------------------------------------------------------------- public solver
def solve_reaction_diffusion(rate_law, shape_exponent, length, effective_diffusivity, concentration, *,
                             mass_biot=None, prater_number=0.0, arrhenius_number=0.0, temperature=None,
                             heat_biot=None, inner_radius_fraction=0.0, profile_points=0,
                             time_budget=2.0, force_numerical=False) -> ReactionDiffusionResult:
    """Effectiveness factor and every steady state of a pellet (see module docstring).

    Parameters
    ----------
    rate_law : registered rate law (``service.physics.kinetics``), constant at ``temperature``.
    shape_exponent : 0 slab, 1 cylinder, 2 sphere.
    length : the shape's own length L [m] (radius, or slab diffusion length).
    effective_diffusivity : D_e [m^2/s].
    concentration : surface concentration c_s [mol/m^3], or the bulk one when ``mass_biot`` is given.
    mass_biot : Bi_m = k_m L / D_e [-], None for no film.
    prater_number, arrhenius_number : beta [-] (> -1), gamma [-] (>= 0); 0 for isothermal.
    temperature : surface (or bulk) temperature [K], for reported temperatures.
    heat_biot : Bi_h = h L / lambda_e [-] with a film; None = no heat-film resistance.
    inner_radius_fraction : a = inner/outer radius for a ring (m = 1 only), both faces at c_s.
    profile_points : number of profile points (0 = no profile).
    time_budget : wall-clock budget [s]; when exceeded the status is 'budget_exceeded'.
    force_numerical : skip the closed forms (for tests and comparison).

    Returns a ``ReactionDiffusionResult``; never raises for non-convergence (bad input
    raises ``PhysicsInputError``).
    """
    t0 = time.monotonic()
    m = shape_exponent
    if m not in (0, 1, 2):
        raise PhysicsInputError("shape_exponent", shape_exponent, "must be 0, 1 or 2")
    for name, val in (("length", length), ("effective_diffusivity", effective_diffusivity)):
        if not (isinstance(val, (int, float)) and math.isfinite(val) and val > 0):
            raise PhysicsInputError(name, val, "must be finite and > 0")
    a = float(inner_radius_fraction)
    if not 0.0 <= a < 1.0 or (a > 0 and (m != 1 or mass_biot is not None)):
        raise PhysicsInputError("inner_radius_fraction", inner_radius_fraction,
                                "must be in [0, 1); rings need shape_exponent 1 and no film")
    if mass_biot is not None and not (math.isfinite(mass_biot) and mass_biot > 0):
        raise PhysicsInputError("mass_biot", mass_biot, "must be finite and > 0")
    if heat_biot is not None and not (heat_biot > 0):
        raise PhysicsInputError("heat_biot", heat_biot, "must be > 0")
    beta, gamma = float(prater_number), float(arrhenius_number)
    if not (math.isfinite(beta) and beta > -1.0):
        raise PhysicsInputError("prater_number", prater_number, "must be finite and > -1")
    if not (math.isfinite(gamma) and gamma >= 0.0):
        raise PhysicsInputError("arrhenius_number", arrhenius_number, "must be finite and >= 0")
    if not (isinstance(time_budget, (int, float)) and time_budget > 0):
        raise PhysicsInputError("time_budget", time_budget, "must be > 0")
    norm = normalized_rate(rate_law, concentration)
    phi2 = length**2 * norm.surface_rate / (effective_diffusivity * norm.surface_concentration)
    prob = _Problem(m, a, phi2, norm, beta, gamma, mass_biot,
                    0.0 if (mass_biot is None or heat_biot is None) else mass_biot / heat_biot,
                    deadline=t0 + float(time_budget))
    phi = math.sqrt(phi2)
    c_ref, T_ref = norm.surface_concentration, temperature
    try:
        if not force_numerical and not prob.thermal and a == 0:
            res = _closed(prob, phi, c_ref, profile_points)
            if res is not None:
                res.elapsed = time.monotonic() - t0
                return res
        monotone = norm.is_monotone() and not (beta * gamma > 0)
        if monotone and not prob.thermal and a == 0 and mass_biot is None and not force_numerical:
            Phi = generalized_from_thiele(phi, m, norm)
            if Phi > _ASYMPTOTIC_MODULUS:
                return _asymptotic(prob, phi, Phi, t0)
        if monotone:
            st = _solve_on_meshes(prob, _seed_default(prob))
            search = "unique"
            states, failures = ([st] if st else []), (0 if st else 1)
        elif a > 0:
            states, search, failures = _ring_states(prob)
        else:
            states, search, failures = _find_states(prob, phi)
    except _Budget:
        return _finish(ReactionDiffusionResult(False, "budget_exceeded", STATUS_MESSAGES["budget_exceeded"],
                                               thiele_modulus=phi), t0)
    if not states:
        return _finish(ReactionDiffusionResult(False, "not_converged", STATUS_MESSAGES["not_converged"],
                                               thiele_modulus=phi, search=search), t0)
    try:
        out = _package(prob, states, c_ref, T_ref, profile_points, unique=(search == "unique"))
    except _Budget:
        return _finish(ReactionDiffusionResult(False, "budget_exceeded", STATUS_MESSAGES["budget_exceeded"],
                                               thiele_modulus=phi), t0)
    status = "partially_converged" if (failures and search in ("scan", "continuation")) else "converged"
    out.status, out.message, out.search, out.thiele_modulus = status, STATUS_MESSAGES[status], search, phi
    out.success = status in SUCCESS_STATUSES
    return _finish(out, t0)


def _finish(res, t0):
    res.elapsed = time.monotonic() - t0
    return res


def _package(prob, states, c_ref, T_ref, profile_points, unique=False):
    film = prob.bi_m is not None
    out_states = []
    for st in sorted(states, key=lambda s: s["eta"]):
        xi, u = st["xi"], st["u"]
        # monotone kinetics: unique and stable (comparison principle), no eigenvalue needed
        prob.check_time()
        lam = -math.inf if unique else _leading_eigenvalue(prob, st["xi_coarse"], st["u_coarse"])
        us = float(st["u_surface"]) if film else 1.0
        u0 = max(float(st["u_center"]), 0.0)
        ths = float(prob.theta(np.array([us]), us)[0]) if film else 1.0
        th0 = float(prob.theta(np.array([u0]), us)[0])
        out_states.append(SteadyState(
            effectiveness_factor=float(st["eta"]),
            center_concentration=u0 * c_ref,
            stable=lam < 0,
            leading_eigenvalue=lam,
            center_temperature=(th0 * T_ref if (prob.thermal and T_ref) else None),
            overall_effectiveness=float(st["overall"]) if film else None,
            surface_concentration=us * c_ref if film else None,
            surface_temperature=(ths * T_ref if (film and prob.thermal and T_ref) else None),
            error_estimate=st["error"], residual=st["residual"],
            dead_zone_fraction=_dead_zone(prob, xi, u), _xi=xi, _u=u))
    stable = [i for i, s in enumerate(out_states) if s.stable]
    pool = stable or list(range(len(out_states)))
    head = max(pool, key=lambda i: out_states[i].effectiveness_factor)
    h = out_states[head]
    prof = None
    if profile_points:
        x = np.linspace(prob.a, 1.0, int(profile_points))
        uu = np.maximum(np.interp(x, h._xi, h._u), 0.0)
        us = float(h._u[-1]) if film else 1.0
        prof = {"position": x, "concentration": uu * c_ref,
                "temperature": (prob.theta(uu, us) * T_ref if (prob.thermal and T_ref) else None)}
    return ReactionDiffusionResult(
        True, "converged", STATUS_MESSAGES["converged"],
        effectiveness_factor=h.effectiveness_factor, overall_effectiveness=h.overall_effectiveness,
        steady_states=out_states, headline_index=head, dead_zone_fraction=h.dead_zone_fraction,
        residual=h.residual, error_estimate=h.error_estimate, nodes=len(h._xi), method="numerical",
        profile=prof)


def _closed(prob, phi, c_ref, profile_points):
    law, m = prob.norm.rate_law, prob.m
    first = isinstance(law, ReversibleFirstOrder) or (isinstance(law, PowerLaw) and law.order == 1) \
        or (isinstance(law, LangmuirHinshelwood) and law.adsorption_constant == 0)
    zero = isinstance(law, PowerLaw) and law.order == 0
    ue = prob.norm.u_eq
    x = np.linspace(0.0, 1.0, int(profile_points)) if profile_points else None
    if first:
        phi1 = phi / math.sqrt(1.0 - ue)
        eta = float(closed_form.effectiveness_first_order(phi1, m))
        overall, us = None, 1.0
        if prob.bi_m is not None:  # Robin: eta_o = eta / (1 + eta phi^2 / ((m+1) Bi))
            overall = eta / (1.0 + eta * phi1**2 / ((m + 1) * prob.bi_m))
            us = ue + (1 - ue) * overall / eta
        u0 = ue + (us - ue) * float(closed_form.profile_first_order(np.array([0.0]), phi1, m)[0])
        prof = None
        if x is not None:
            prof = {"position": x, "concentration": (ue + (us - ue) * closed_form.profile_first_order(x, phi1, m)) * c_ref,
                    "temperature": None}
        st = SteadyState(eta, u0 * c_ref, True, -math.inf, overall_effectiveness=overall,
                         surface_concentration=us * c_ref if prob.bi_m is not None else None)
        return ReactionDiffusionResult(True, "closed_form", STATUS_MESSAGES["closed_form"], eta, overall, [st], 0,
                                       None, 0.0, 0.0, 0, "closed_form", "unique", prof, phi)
    if zero and prob.bi_m is None:
        xd = zero_order_dead_zone_fraction(phi, m)
        eta = 1.0 - xd ** (m + 1)
        prof = None
        if x is not None:
            prof = {"position": x, "concentration": zero_order_profile(x, phi, m) * c_ref, "temperature": None}
        st = SteadyState(eta, float(zero_order_profile(0.0, phi, m)) * c_ref, True, -math.inf,
                         dead_zone_fraction=xd if xd > 0 else None)
        return ReactionDiffusionResult(True, "closed_form", STATUS_MESSAGES["closed_form"], eta, None, [st], 0,
                                       xd if xd > 0 else None, 0.0, 0.0, 0, "closed_form", "unique", prof, phi)
    return None


def _asymptotic(prob, phi, Phi, t0):
    m = prob.m
    eta = (1.0 / Phi) * (1.0 - m / (2.0 * (m + 1) * Phi))
    st = SteadyState(eta, 0.0, True, -math.inf)
    return _finish(ReactionDiffusionResult(True, "asymptotic", STATUS_MESSAGES["asymptotic"], eta, None, [st], 0,
                                           None, 0.0, 1.0 / Phi, 0, "asymptotic", "unique", None, phi), t0)
