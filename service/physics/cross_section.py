"""2-D reaction-diffusion solvers: lobed extrudate cross-sections and finite (r, z) cylinders.

Dimensionless problem (isothermal, any rate law), u = c/c_s [-]:

    laplacian(u) = phi^2 f(u)  in the domain,   u = 1 on the permeable surface,

    eta = <f(u)> / f(1)  (volume average of the rate over the surface rate),

with f(u), df/du given as vectorized callables (f(1) > 0) and phi the Thiele modulus
on a stated length (below). Newton's method on the discrete equations (sparse LU, backtracking on the residual); a linear rate
(f = u) is solved directly for w = 1 - u, which keeps the digits of 1 - eta at small phi.

Cross-sections (``solve_cross_section``): P1 finite elements on a boundary-fitted
polar mesh r = s R(theta) of one symmetry sector (the sector edges are symmetry lines:
zero flux is the natural boundary condition of the weak form). Lumped mass. The mesh
is graded toward the surface (boundary layers) and toward the re-entrant corner of a
lobed section (corner singularity), so the effectiveness converges at second order
in the mesh size h; Richardson extrapolation of the meshes (N, 2N) removes the h^2
term. Lengths in units of the equivalent radius L_eq = 2 A/P (the radius for a circle):
phi = L_eq sqrt(k/D_e).

Finite cylinders (``solve_finite_cylinder``): cell-centred finite volumes on a
uniform (r, z) grid of the quarter section 0 <= r <= R, 0 <= z <= H/2 (axis and
mid-plane are symmetry lines), second order, phi = R sqrt(k/D_e).

References
----------
1. Aris, R. (1975). The Mathematical Theory of Diffusion and Reaction in Permeable
   Catalysts, Vol. 1. Clarendon Press, Oxford.
2. Strang, G., Fix, G. (2008). An Analysis of the Finite Element Method, 2nd ed.,
   Wellesley-Cambridge (P1 elements, mass lumping, corner singularities and graded meshes).
3. Patankar, S. V. (1980). Numerical Heat Transfer and Fluid Flow. Hemisphere (finite volumes).
4. Richardson, L. F. (1911). The approximate arithmetical solution by finite differences
   of physical problems. Phil. Trans. R. Soc. A 210, 307-357.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
from scipy import sparse
from scipy.sparse import linalg as spla

from .errors import PhysicsInputError

__all__ = [
    "Solution2D",
    "STATUS_MESSAGES",
    "solve_cross_section",
    "effectiveness_cross_section",
    "solve_finite_cylinder",
    "polar_mesh",
]

STATUS_MESSAGES = {
    0: "Converged: the scaled residual is below the tolerance.",
    1: "The maximum number of Newton iterations was reached before convergence.",
    2: "Non-finite values appeared during the Newton iteration (check f and df/du).",
    3: "The modulus exceeds what the mesh resolves (phi > 10 n_s for cross-sections, "
       "phi > n_r/3 for (r, z) cylinders): the value is not reliable, use the asymptote.",
}


@dataclass(frozen=True)
class Solution2D:
    """Result of a 2-D solve.

    success : status == 0.
    status : key of ``STATUS_MESSAGES``.
    message : STATUS_MESSAGES[status].
    effectiveness_factor : eta [-] on this mesh (or Richardson-extrapolated, see ``method``).
    residual : max-norm of the discrete residual, each row scaled by its own size
        (|diagonal| + phi^2 * volume) [-].
    iterations : Newton iterations used.
    nodes : number of unknowns (finest mesh).
    min_concentration : smallest u in the domain [-] (centre value for convex shapes).
    method : "mesh" or "richardson" (extrapolated from meshes N and 2N).
    error_estimate : |eta_2N - eta_N| / 3 for "richardson" (h^2 estimate), else None.
    """

    success: bool
    status: int
    message: str
    effectiveness_factor: float
    residual: float
    iterations: int
    nodes: int
    min_concentration: float
    method: str = "mesh"
    error_estimate: float | None = None


def _linear(u):
    return u


def _linear_d(u):
    return np.ones_like(u)


def _newton(stiff, bvec, volume, phi2, rate, rate_d, tol, max_iter, u0=None):
    """Solve stiff u + bvec = phi2 * volume * f(u) (unknowns only). Returns (u, status, res, it).

    The residual of each row is scaled by the size of that row (|diagonal of stiff| +
    phi2 * volume), so tol is relative and reachable in double precision.
    """
    u = np.ones(volume.size) if u0 is None else u0.copy()
    scale = np.abs(stiff.diagonal()) + phi2 * volume

    def residual(v):
        r = stiff @ v + bvec - phi2 * volume * rate(v)
        return r, (float(np.max(np.abs(r) / scale)) if v.size else 0.0)

    resid, res = residual(u)
    for it in range(1, max_iter + 1):
        if not np.isfinite(res):
            return u, 2, res, it
        jac = (stiff - sparse.diags(phi2 * volume * rate_d(u))).tocsc()
        step = spla.splu(jac, permc_spec="MMD_AT_PLUS_A").solve(-resid)
        if not np.all(np.isfinite(step)):
            return u, 2, res, it
        lam, trial = 1.0, None
        for _ in range(12):  # backtracking: accept the first step that lowers the residual
            trial = np.maximum(u + lam * step, 0.0)  # c >= 0 (maximum principle)
            r_trial, res_trial = residual(trial)
            if np.isfinite(res_trial) and (res_trial < res or res_trial <= tol):
                break
            lam *= 0.5
        u, resid, res = trial, r_trial, res_trial
        if res <= tol or np.max(np.abs(lam * step)) <= 1e-13:
            return u, (0 if np.isfinite(res) else 2), res, it
    return u, 1, res, max_iter


def _newton_continued(stiff, bvec, volume, phi2, rate, rate_d, tol, max_iter):
    """Newton from u = 1; if that fails, natural continuation in phi^2 (16 steps, warm starts)."""
    u, status, res, it = _newton(stiff, bvec, volume, phi2, rate, rate_d, tol, max_iter)
    if status == 0:
        return u, status, res, it
    total, u = it, np.ones(volume.size)
    for frac in np.linspace(1.0 / 16.0, 1.0, 16):
        u, status, res, it = _newton(stiff, bvec, volume, phi2 * frac, rate, rate_d, tol,
                                     max_iter, u0=u)
        total += it
        if status != 0:
            break
    return u, status, res, total


def _check_rate(rate, rate_d):
    if (rate is None) != (rate_d is None):
        raise PhysicsInputError("rate_derivative", rate_d, "give both rate and its derivative")
    if rate is None:
        return _linear, _linear_d, True
    f1 = float(np.asarray(rate(np.ones(1)))[0])
    if not (np.isfinite(f1) and f1 > 0):
        raise PhysicsInputError("rate", f1, "f(1) must be finite and > 0")
    return rate, rate_d, False


# --------------------------------------------------------------------------- polar mesh
def _boundary_radius(shape: str, theta):
    """R(theta) in units of the lobe diameter (lobed) or radius (circle)."""
    if shape == "circle":
        return np.ones_like(theta)
    n = {"trilobe": 3, "quadrilobe": 4}[shape]
    k = 2.0 * np.pi * np.arange(n) / n
    return np.max(np.cos(theta[:, None] - k[None, :]), axis=1)


_SECTOR = {"circle": np.pi / 4.0, "trilobe": np.pi / 3.0, "quadrilobe": np.pi / 4.0}
_SHAPES = {"circle": 1, "trilobe": 3, "quadrilobe": 4}


@functools.lru_cache(maxsize=32)
def polar_mesh(shape: str, n_theta: int, n_s: int, grading: float = 3.0):
    """P1 mesh of one symmetry sector, with stiffness and lumped mass, cached.

    The sector runs from theta = 0 (a lobe tip) to theta = pi/n (the re-entrant
    corner), [0, pi/4] for a circle. Nodes: the centre plus rings s_j = 1 - (1 - j/n_s)^g
    at angles theta_i = sector (1 - (1 - i/n_theta)^g') (g' = g for lobes, 1 for the circle),
    g = 3 by default (enough for the corner exponent pi/alpha = 3/5 of the trilobe).

    Returns dict: points (N, 2), triangles (M, 3), stiffness (csr), mass (lumped, N),
    interior (index array), boundary (index array), area (mesh area, in units^2),
    exact_area (sector area of the exact shape), length_unit (L_eq in mesh units).
    """
    if shape not in _SHAPES:
        raise PhysicsInputError("shape", shape, f"choose one of {', '.join(_SHAPES)}")
    sector = _SECTOR[shape]
    t = np.linspace(0.0, 1.0, n_theta + 1)
    theta = sector * (1.0 - (1.0 - t) ** (grading if shape != "circle" else 1.0))
    s = 1.0 - (1.0 - np.linspace(0.0, 1.0, n_s + 1)[1:]) ** grading
    rad = _boundary_radius(shape, theta)
    ring_r = s[:, None] * rad[None, :]
    x = np.concatenate([[0.0], (ring_r * np.cos(theta)[None, :]).ravel()])
    y = np.concatenate([[0.0], (ring_r * np.sin(theta)[None, :]).ravel()])
    nt = n_theta + 1
    idx = 1 + np.arange(n_s * nt).reshape(n_s, nt)
    fan = np.column_stack([np.zeros(n_theta, int), idx[0, :-1], idx[0, 1:]])
    a, b = idx[:-1, :-1].ravel(), idx[:-1, 1:].ravel()
    c, d = idx[1:, :-1].ravel(), idx[1:, 1:].ravel()
    tri = np.vstack([fan, np.column_stack([a, c, d]), np.column_stack([a, d, b])])
    pts = np.column_stack([x, y])
    p0, p1, p2 = pts[tri[:, 0]], pts[tri[:, 1]], pts[tri[:, 2]]
    e0, e1, e2 = p2 - p1, p0 - p2, p1 - p0          # edge opposite each vertex
    area = 0.5 * np.abs(e1[:, 0] * e2[:, 1] - e1[:, 1] * e2[:, 0])
    edges = (e0, e1, e2)
    rows, cols, vals = [], [], []
    for i in range(3):
        for j in range(3):
            rows.append(tri[:, i])
            cols.append(tri[:, j])
            vals.append((edges[i] * edges[j]).sum(axis=1) / (4.0 * area))
    n = pts.shape[0]
    stiff = sparse.csr_matrix((np.concatenate(vals), (np.concatenate(rows),
                               np.concatenate(cols))), shape=(n, n))
    mass = np.bincount(tri.ravel(), weights=np.repeat(area / 3.0, 3), minlength=n)
    boundary = idx[-1]
    interior = np.setdiff1d(np.arange(n), boundary)
    if shape == "circle":
        exact_area, perimeter = sector / 2.0, sector
    else:
        exact_area = 0.5 * (sector / 2.0 + np.sin(2.0 * sector) / 4.0)  # (1/2) int_0^sector cos^2
        perimeter = sector  # arc of the lobe circle r = cos(theta): (d/2) * (2 * sector)
    k_ii = stiff[interior][:, interior].tocsc()
    k_ib = stiff[interior][:, boundary]
    return {
        "points": pts, "triangles": tri, "stiffness": stiff, "mass": mass,
        "interior": interior, "boundary": boundary, "area": float(area.sum()),
        "exact_area": float(exact_area), "length_unit": float(2.0 * exact_area / perimeter),
        "k_ii": k_ii, "k_ib_sum": np.asarray(k_ib.sum(axis=1)).ravel(),
    }


def _solve_mesh(mesh, phi, rate, rate_d, linear, tol, max_iter):
    lu = mesh["length_unit"]
    phi2 = (phi / lu) ** 2                         # modulus in mesh units
    interior = mesh["interior"]
    vol = mesh["mass"][interior]
    # weak form: -K u = phi2 M f(u)  ->  (-K_ii) u_i + (-K_ib 1) = phi2 M f(u_i)
    stiff = -mesh["k_ii"]
    bvec = -mesh["k_ib_sum"]
    if linear:
        # solve for w = 1 - u: (K_ii + phi2 M) w = phi2 M 1 keeps the digits of 1 - eta
        if phi2 == 0.0:
            w = np.zeros_like(vol)
        else:
            mat = (-stiff + sparse.diags(phi2 * vol)).tocsc()
            w = spla.splu(mat, permc_spec="MMD_AT_PLUS_A").solve(phi2 * vol)
        u = 1.0 - w
        resid = stiff @ u + bvec - phi2 * vol * u
        res = float(np.max(np.abs(resid) / (np.abs(stiff.diagonal()) + phi2 * vol)))
        status, it = (0 if np.all(np.isfinite(u)) else 2), 1
        eta = 1.0 - float(np.sum(vol * w)) / mesh["area"]
        return eta, status, res, it, float(np.min(u)) if u.size else 1.0
    else:
        u, status, res, it = _newton_continued(stiff, bvec, vol, phi2, rate, rate_d, tol, max_iter)
    f1 = float(np.asarray(rate(np.ones(1)))[0])
    m_b = mesh["mass"][mesh["boundary"]]
    total = np.sum(vol * rate(u)) + np.sum(m_b) * f1
    eta = total / (mesh["area"] * f1)
    return float(eta), status, res, it, float(np.min(u)) if u.size else 1.0


def solve_cross_section(shape: str, thiele_modulus: float, rate=None, rate_derivative=None,
                        n_theta: int = 40, n_s: int = 40, richardson: bool = True,
                        tol: float = 1e-10, max_iter: int = 50) -> Solution2D:
    """Effectiveness factor of an infinitely long prism of section ``shape`` (2-D solve).

    Parameters
    ----------
    shape : "circle", "trilobe" or "quadrilobe" (section of ``industrial_shapes.extrudate_cross_section``).
    thiele_modulus : phi = L_eq sqrt(k/D_e) [-], L_eq = 2 A/P (circle: the radius), >= 0.
    rate, rate_derivative : vectorized f(u), df/du (None: first order f = u).
    n_theta, n_s : sector mesh divisions (angle, radius) of the coarse mesh.
    richardson : also solve on (2 n_theta, 2 n_s) and extrapolate eta = (4 eta_2N - eta_N)/3.
    tol : Newton tolerance on the row-scaled residual (see ``Solution2D.residual``).

    Validity: the graded mesh resolves boundary layers for phi up to about 10 n_s
    (relative error ~1e-5 with Richardson); beyond, status 3 is returned (use the
    asymptote eta -> 1/Phi). Nonlinear rates: Newton from u = 1 with backtracking and
    iterates kept >= 0, then natural continuation in phi^2 if that fails; one steady
    state is returned (the one reached from the kinetic regime).
    """
    phi = float(thiele_modulus)
    if not (np.isfinite(phi) and phi >= 0):
        raise PhysicsInputError("thiele_modulus", thiele_modulus, "must be finite and >= 0")
    rate, rate_d, linear = _check_rate(rate, rate_derivative)
    meshes = [(n_theta, n_s)] + ([(2 * n_theta, 2 * n_s)] if richardson else [])
    out = []
    for nt, ns in meshes:
        mesh = polar_mesh(shape, nt, ns)
        out.append(_solve_mesh(mesh, phi, rate, rate_d, linear, tol, max_iter) + (mesh,))
    eta, status, res, it, umin, mesh = out[-1]
    status = max(o[1] for o in out)
    if status == 0 and phi > 10.0 * n_s:
        status = 3
    if richardson:
        err = abs(out[1][0] - out[0][0]) / 3.0
        eta = (4.0 * out[1][0] - out[0][0]) / 3.0
        method = "richardson"
    else:
        err, method = None, "mesh"
    return Solution2D(status == 0, status, STATUS_MESSAGES[status], float(eta), res,
                      sum(o[3] for o in out), int(mesh["interior"].size), umin, method, err)


def effectiveness_cross_section(shape: str, thiele_modulus, **options):
    """eta only (float or array over ``thiele_modulus``) from ``solve_cross_section``."""
    phi = np.asarray(thiele_modulus, dtype=float)
    eta = np.array([solve_cross_section(shape, float(p), **options).effectiveness_factor
                    for p in np.atleast_1d(phi)]).reshape(phi.shape)
    return float(eta) if np.ndim(thiele_modulus) == 0 else eta


# --------------------------------------------------------------------------- (r, z) cylinder
@functools.lru_cache(maxsize=16)
def _cylinder_operator(n_r: int, n_z: int, half_length: float, inner: float):
    """Finite-volume operator of (1/x)(x u_x)_x + u_zz on [inner, 1] x [0, half_length]."""
    hr, hz = (1.0 - inner) / n_r, half_length / n_z
    xc = inner + (np.arange(n_r) + 0.5) * hr
    xf = inner + np.arange(n_r + 1) * hr
    vol = np.repeat(xc * hr * hz, n_z)  # per radian
    ids = np.arange(n_r * n_z).reshape(n_r, n_z)
    diag = np.zeros((n_r, n_z))
    bvec = np.zeros((n_r, n_z))
    cr = np.repeat((xf[1:-1] * hz / hr)[:, None], n_z, axis=1)       # radial faces
    cz = np.repeat((xc * hr / hz)[:, None], n_z - 1, axis=1)         # axial faces
    diag[:-1] -= cr
    diag[1:] -= cr
    diag[:, :-1] -= cz
    diag[:, 1:] -= cz
    faces = [(xf[-1] * hz / (hr / 2.0), (-1, slice(None)))]          # u = 1 at r = R
    if inner > 0.0:
        faces.append((xf[0] * hz / (hr / 2.0), (0, slice(None))))    # u = 1 at r = R_i
    for coef, where in faces:
        diag[where] -= coef
        bvec[where] += coef
    c_top = xc * hr / (hz / 2.0)                                     # u = 1 at z = H/2
    diag[:, -1] -= c_top
    bvec[:, -1] += c_top
    rows = [ids[:-1].ravel(), ids[1:].ravel(), ids[:, :-1].ravel(), ids[:, 1:].ravel(), ids.ravel()]
    cols = [ids[1:].ravel(), ids[:-1].ravel(), ids[:, 1:].ravel(), ids[:, :-1].ravel(), ids.ravel()]
    vals = [cr.ravel(), cr.ravel(), cz.ravel(), cz.ravel(), diag.ravel()]
    n = n_r * n_z
    mat = sparse.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                            shape=(n, n))
    return mat, bvec.ravel(), vol


def solve_finite_cylinder(thiele_modulus: float, length_over_diameter: float, rate=None,
                          rate_derivative=None, n_r: int = 40, n_z: int | None = None,
                          radius_ratio: float = 0.0, richardson: bool = False,
                          tol: float = 1e-10, max_iter: int = 50) -> Solution2D:
    """Finite cylinder or ring (radius R, length H, all faces permeable), any rate law, 2-D FV.

    (1/x) d/dx(x du/dx) + d2u/dzeta2 = phi^2 f(u), x = r/R, zeta = z/R,
    phi = R sqrt(k/D_e) [-]; eta = <f(u)>/f(1) (midpoint rule, consistent with the
    finite-volume balance). Second order in the cell size; uniform cells resolve boundary
    layers for phi up to about n_r / 3 (status 3 beyond).

    Parameters
    ----------
    thiele_modulus : phi on the radius [-], >= 0.
    length_over_diameter : H / (2R) [-] > 0 (R the outer radius).
    rate, rate_derivative : vectorized f(u), df/du (None: first order).
    n_r, n_z : cells in r and in the half length (default n_z = n_r * H/(2R), rounded).
    radius_ratio : R_i / R [-] in [0, 1): 0 for a solid cylinder, > 0 for a ring whose
        bore surface is permeable too (phi stays on the OUTER radius R here).
    richardson : also solve on the grid (2 n_r, 2 n_z) and extrapolate (4 eta_2 - eta_1)/3.
    """
    phi = float(thiele_modulus)
    if not (np.isfinite(phi) and phi >= 0):
        raise PhysicsInputError("thiele_modulus", thiele_modulus, "must be finite and >= 0")
    ld = float(length_over_diameter)
    if not (np.isfinite(ld) and ld > 0):
        raise PhysicsInputError("length_over_diameter", length_over_diameter, "must be > 0")
    rate, rate_d, linear = _check_rate(rate, rate_derivative)
    inner = float(radius_ratio)
    if not (np.isfinite(inner) and 0.0 <= inner < 1.0):
        raise PhysicsInputError("radius_ratio", radius_ratio, "must lie in [0, 1)")
    n_z = int(n_z or max(2, round(n_r * ld / (1.0 - inner))))
    grids = [(int(n_r), n_z)] + ([(2 * int(n_r), 2 * n_z)] if richardson else [])
    out = [_solve_cylinder_grid(phi * phi, ld, inner, nr, nz, rate, rate_d, linear, tol, max_iter)
           for nr, nz in grids]
    eta, status, res, it, umin, nodes = out[-1]
    status = max(o[1] for o in out)
    if status == 0 and phi > n_r / 3.0:
        status = 3
    err, method = None, "mesh"
    if richardson:
        err, method = abs(out[1][0] - out[0][0]) / 3.0, "richardson"
        eta = (4.0 * out[1][0] - out[0][0]) / 3.0
    return Solution2D(status == 0, status, STATUS_MESSAGES[status], float(eta), res,
                      sum(o[3] for o in out), nodes, umin, method, err)


def _solve_cylinder_grid(phi2, ld, inner, n_r, n_z, rate, rate_d, linear, tol, max_iter):
    mat, bvec, vol = _cylinder_operator(n_r, n_z, ld, inner)
    if linear:
        u, status, res, it = _newton(mat, bvec, vol, phi2, rate, rate_d, tol, 1)
    else:
        u, status, res, it = _newton_continued(mat, bvec, vol, phi2, rate, rate_d, tol, max_iter)
    if linear and status == 1:
        status = 0 if np.all(np.isfinite(u)) else 2
    f1 = float(np.asarray(rate(np.ones(1)))[0])
    eta = float(np.sum(vol * rate(u)) / (np.sum(vol) * f1))
    return eta, status, res, it, float(np.min(u)), u.size
