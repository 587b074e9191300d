"""Modified Cam Clay for the soil skeleton, with void-ratio-dependent permeability.

The model of Roscoe & Burland (1968, "On the generalised stress-strain behaviour of 'wet'
clay", in Engineering Plasticity, CUP, 535-609), in the backward-Euler form of Borja & Lee
(1990, "Cam-Clay plasticity, part I: implicit integration of elasto-plastic constitutive
relations", Comput. Methods Appl. Mech. Eng. 78, 49-72) and Borja (1991, "Cam-Clay
plasticity, part II: implicit integration of constitutive equation based on a nonlinear
elastic stress predictor", CMAME 88, 225-240; titles and pages from memory), over all
quadrature points of a region at once.

Conventions
-----------
Vectors are [xx, yy, zz, xy] (plane strain: zz out of plane; axisymmetric: x = r, y = z,
zz = hoop), engineering shear strain, TENSION POSITIVE, kPa, like every material of the
package. Inside, the invariants are the usual soil-mechanics ones, compression positive:

    p' = -(s_xx + s_yy + s_zz) / 3,      q = sqrt(3/2 s:s),   s = deviatoric stress,
    eps_v = -(e_xx + e_yy + e_zz),        (volumetric strain, compression positive).

Shapes: ``npts`` points; stress, strain (npts, 4); tangent (npts, 4, 4); scalars (npts,).

Model
-----
Yield surface and plastic potential (associated), Roscoe & Burland (1968); Wood (1990, Soil
Behaviour and Critical State Soil Mechanics, CUP, ch. 3-4, from memory):

    f = q^2 / M^2 + p' (p' - p'_c) = 0.

Elasticity, nonlinear in p' with constant Poisson's ratio (or a constant shear modulus G):

    d p' = p' (1 + e_ref) / kappa  d eps_v^e,     K = (1 + e_ref) p' / kappa,
    G = 3 (1 - 2 nu) / (2 (1 + nu)) K.

Hardening: d p'_c / p'_c = (1 + e_ref) / (lambda - kappa) d eps_v^p.

Strain measure and void ratio
-----------------------------
The finite-element strains are small strains about the configuration in which the point
was created, so the exact mass balance of the solid gives

    e = e_ref - (1 + e_ref) eps_v       (e_ref: void ratio when the point was created),

and the moduli use (1 + e_ref). With the exponential (logarithmic-in-p') integration below,
elastic and plastic volume changes then obey Delta e = -kappa Delta ln p' and
Delta e = -(lambda - kappa) Delta ln p'_c EXACTLY over any increment: the normal compression
line e = N - lambda ln p' and the unloading lines e = e_k - kappa ln p' are reproduced for any
step size, and the settlement of a layer equals H Delta e / (1 + e0), the quantity of the hand
method (Terzaghi's e-log sigma' relation with Cc = lambda ln 10, common practice link). Using
(1 + e_n) instead (a natural-strain flavour) would drift from the hand method by several per
cent at large load ratios while the FE displacements remain small-strain ones.

Integration over a step (backward Euler, Borja & Lee 1990; Borja 1991)
----------------------------------------------------------------------
With k = kappa / (1 + e_ref), l = (lambda - kappa) / (1 + e_ref), and the shear modulus G_n
taken at the start of the step (p'_n; a choice made here so that the deviatoric return stays
radial and the tangent stays exact and cheap; it lags behind p' only within one step):

    trial:   p_tr = p'_n exp(Delta eps_v / k),        s_tr = s_n + 2 G_n Delta e_dev,
    plastic: p'   = p_tr exp(-zeta / k),               p'_c = p'_c,n exp(zeta / l),
             q    = q_tr / (1 + 6 G_n dgamma / M^2),   s = s_tr q / q_tr (radial return),
    with unknowns zeta = Delta eps_v^p and dgamma (plastic multiplier) solving
             r1 = zeta - dgamma (2 p' - p'_c) = 0,     r2 = f(p', q, p'_c) = 0.

The exponential pressure update is the integral of d p'/p' = d eps_v^e / k at fixed e_ref
(Borja & Lee 1990 use this exponential form). The 2 x 2 local Newton runs on all plastic points
at once, with a mask of the unconverged ones. The return is radial in the deviatoric plane
(the deviator keeps the trial direction), so the local problem lives in the (p', q) invariant
plane, with the flow direction taken at the end of the step. The consistent tangent
is the exact derivative of this update (implicit-function theorem on r1, r2); it is not
symmetric in general (exponential hardening), so the global solver must not assume symmetry.

Call ``update`` with the strain increment measured from the last CONVERGED state (every
global Newton iteration restarts from it); the state passed in is never modified.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError, SolverError
from .elastic import GAMMA_W

# m: volumetric selector, m . eps = trace (tension positive).
M_VOL = np.array([1.0, 1.0, 1.0, 0.0])
# Engineering strain vector -> deviatoric strain in TENSOR components [e_xx, e_yy, e_zz, e_xy].
P_DEV = np.array([[2.0, -1.0, -1.0, 0.0],
                  [-1.0, 2.0, -1.0, 0.0],
                  [-1.0, -1.0, 2.0, 0.0],
                  [0.0, 0.0, 0.0, 1.5]]) / 3.0
# Weights of the tensor norm |s|^2 = s_xx^2 + s_yy^2 + s_zz^2 + 2 s_xy^2.
W_NORM = np.array([1.0, 1.0, 1.0, 2.0])

_LOCAL_TOL = 1e-12     # relative tolerance of the local Newton (both residuals)
_LOCAL_MAXIT = 100
_YIELD_TOL = 1e-12     # f_trial > _YIELD_TOL p'_c^2 -> plastic step


def invariants(stress: np.ndarray):
    """Mean effective stress p' (compression +), q, deviatoric stress s (tension +, tensor).

    ``stress`` (npts, 4) tension positive -> p (npts,), q (npts,), s (npts, 4).
    """
    stress = np.asarray(stress, dtype=float)
    p = -(stress[:, 0] + stress[:, 1] + stress[:, 2]) / 3.0
    s = stress + p[:, None] * M_VOL
    q = np.sqrt(1.5 * (s * s) @ W_NORM)
    return p, q, s


def k0_stress(vertical_effective_stress, k0) -> np.ndarray:
    """Geostatic effective stress (npts, 4), tension positive, y vertical.

    ``vertical_effective_stress`` sigma'_v (compression positive, kPa) and the earth pressure
    coefficient at rest ``k0`` (scalars or (npts,)): sigma'_xx = sigma'_zz = K0 sigma'_v.
    """
    sv = np.atleast_1d(np.asarray(vertical_effective_stress, dtype=float))
    k0 = np.broadcast_to(np.asarray(k0, dtype=float), sv.shape)
    out = np.zeros((sv.size, 4))
    out[:, 0] = out[:, 2] = -k0 * sv
    out[:, 1] = -sv
    return out


@dataclass
class CamClayState:
    """State of Modified Cam Clay at every point.

    Parameters
    ----------
    stress : (npts, 4) effective stress, tension positive, kPa.
    pc : (npts,) p'_c, size of the yield ellipse on the p' axis (isotropic preconsolidation), kPa.
    void_ratio : (npts,) current void ratio e.
    void_ratio_ref : (npts,) void ratio when the point was created (reference of the small
        strains and of the moduli, see the module notes); defaults to ``void_ratio``.
    """

    stress: np.ndarray
    pc: np.ndarray
    void_ratio: np.ndarray
    void_ratio_ref: np.ndarray | None = None

    def __post_init__(self):
        self.stress = np.asarray(self.stress, dtype=float)
        n = self.stress.shape[0]
        self.pc = np.broadcast_to(np.asarray(self.pc, dtype=float), (n,)).copy()
        self.void_ratio = np.broadcast_to(np.asarray(self.void_ratio, dtype=float), (n,)).copy()
        if self.void_ratio_ref is None:
            self.void_ratio_ref = self.void_ratio.copy()
        else:
            self.void_ratio_ref = np.broadcast_to(np.asarray(self.void_ratio_ref, dtype=float),
                                                  (n,)).copy()

    def copy(self) -> "CamClayState":
        return CamClayState(self.stress.copy(), self.pc.copy(), self.void_ratio.copy(),
                            self.void_ratio_ref.copy())

    def take(self, index) -> "CamClayState":
        """The state of a subset of points (an index array, a slice or a boolean mask)."""
        return CamClayState(np.array(self.stress[index]), self.pc[index], self.void_ratio[index],
                            self.void_ratio_ref[index])

    @property
    def npts(self) -> int:
        return self.stress.shape[0]

    @property
    def p(self) -> np.ndarray:
        """Mean effective stress p' (npts,), compression positive, kPa."""
        return invariants(self.stress)[0]

    @property
    def q(self) -> np.ndarray:
        """Deviator stress q (npts,), kPa."""
        return invariants(self.stress)[1]


@dataclass
class CamClayMaterial:
    """Modified Cam Clay skeleton (Roscoe & Burland 1968) and Darcy flow with Taylor's k(e).

    Parameters
    ----------
    lambda_ : slope of the normal compression line in e - ln p' (Cc = lambda ln 10).
    kappa : slope of the unloading-reloading line in e - ln p' (Cr = kappa ln 10), < lambda.
    e0 : void ratio of the initial state (default for ``initial_state`` and the void ratio at
        which the permeabilities are given).
    M : critical-state stress ratio q / p'. Give it, or ``phi_cs``.
    phi_cs : critical-state friction angle, degrees; M = 6 sin phi / (3 - sin phi), the
        triaxial-compression value (Wood 1990, ch. 7, from memory; common practice).
    poisson_ratio : constant drained Poisson's ratio nu in (0, 0.5); G follows K = (1+e) p'/kappa.
    shear_modulus : constant shear modulus G, kPa (instead of ``poisson_ratio``).
    permeability_x, permeability_y : hydraulic conductivity at void ratio ``e0``, m/day
        (``permeability_y`` defaults to ``permeability_x``).
    permeability_change_index : Ck of Taylor (1948, Fundamentals of Soil Mechanics, Wiley):
        log10 k = log10 k0 - (e0 - e) / Ck; ``None`` keeps k constant.
    biot_coefficient : alpha in (0, 1]; 1 for incompressible grains.
    storage : specific storage 1/M (Biot modulus M), 1/kPa; 0 for incompressible constituents.
    unit_weight : total unit weight, kN/m3.
    name : label used in messages.
    """

    lambda_: float
    kappa: float
    e0: float
    M: float | None = None
    phi_cs: float | None = None
    poisson_ratio: float | None = None
    shear_modulus: float | None = None
    permeability_x: float = 1e-4
    permeability_y: float | None = None
    permeability_change_index: float | None = None
    biot_coefficient: float = 1.0
    storage: float = 0.0
    unit_weight: float = 18.0
    name: str = "material"

    def __post_init__(self):
        if self.permeability_y is None:
            self.permeability_y = self.permeability_x
        f = f"materials.{self.name}"
        if self.M is None and self.phi_cs is None:
            raise InputError("Modified Cam Clay needs the critical-state stress ratio",
                             field=f"{f}.M", fix="give M (e.g. 1.2) or phi_cs in degrees.")
        if self.phi_cs is not None:
            if not (np.isfinite(self.phi_cs) and 0.0 < self.phi_cs < 90.0):
                raise InputError(f"critical-state friction angle must lie in (0, 90) degrees, "
                                 f"got {self.phi_cs}", field=f"{f}.phi_cs",
                                 fix="give phi_cs in degrees, e.g. 25.")
            sphi = np.sin(np.radians(self.phi_cs))
            M_phi = 6.0 * sphi / (3.0 - sphi)
            if self.M is None:
                self.M = float(M_phi)
            elif not np.isclose(self.M, M_phi, rtol=1e-9, atol=0.0):
                raise InputError(f"M = {self.M} and phi_cs = {self.phi_cs} deg (M = {M_phi:.6g}) "
                                 "disagree", field=f"{f}.M", fix="give only one of M and phi_cs.")
        if self.poisson_ratio is None and self.shear_modulus is None:
            raise InputError("Modified Cam Clay needs Poisson's ratio or a shear modulus",
                             field=f"{f}.poisson_ratio",
                             fix="give poisson_ratio (e.g. 0.25) or shear_modulus in kPa.")
        if self.poisson_ratio is not None and self.shear_modulus is not None:
            raise InputError("give either poisson_ratio or shear_modulus, not both",
                             field=f"{f}.shear_modulus",
                             fix="remove one: nu keeps G proportional to K, G keeps it constant.")
        self.check()

    def check(self) -> None:
        f = f"materials.{self.name}"

        def positive(key, unit, fix):
            v = getattr(self, key)
            if v is None or not np.isfinite(v) or v <= 0:
                raise InputError(f"{key} must be positive, got {v}{unit}", field=f"{f}.{key}",
                                 fix=fix)

        positive("lambda_", "", "give the NCL slope in e - ln p' (Cc / ln 10), e.g. 0.2.")
        positive("kappa", "", "give the unloading slope in e - ln p' (Cr / ln 10), e.g. 0.04.")
        if self.kappa >= self.lambda_:
            raise InputError(f"kappa ({self.kappa}) must be smaller than lambda "
                             f"({self.lambda_})", field=f"{f}.kappa",
                             fix="kappa is typically lambda / 10 to lambda / 3.")
        positive("e0", "", "give the initial void ratio, e.g. 1.5.")
        positive("M", "", "give M > 0 (about 0.8 to 1.4 for clays).")
        if self.poisson_ratio is not None and not (0.0 < self.poisson_ratio < 0.5):
            raise InputError(f"Poisson's ratio must lie in (0, 0.5), got {self.poisson_ratio}",
                             field=f"{f}.poisson_ratio",
                             fix="use a drained value such as 0.25; undrained behaviour comes "
                                 "from the pore water.")
        if self.shear_modulus is not None:
            positive("shear_modulus", " kPa", "give G > 0 in kPa.")
        for key in ("permeability_x", "permeability_y"):
            positive(key, " m/day", "give k > 0 in m/day; use a very small value for a nearly "
                                    "impermeable layer.")
        if self.permeability_change_index is not None:
            positive("permeability_change_index", "",
                     "give Ck > 0 (often about 0.5 e0), or leave it out for constant k.")
        if not (0.0 < self.biot_coefficient <= 1.0):
            raise InputError(f"Biot coefficient must lie in (0, 1], got {self.biot_coefficient}",
                             field=f"{f}.biot_coefficient", fix="use 1 for soils.")
        if not np.isfinite(self.storage) or self.storage < 0:
            raise InputError(f"storage must not be negative, got {self.storage} 1/kPa",
                             field=f"{f}.storage", fix="use 0 for incompressible constituents.")
        positive("unit_weight", " kN/m3", "give the total unit weight, e.g. 16 kN/m3.")

    # ------------------------------------------------------------ derived
    @property
    def compression_index(self) -> float:
        """Cc = lambda ln 10 (e - log10 sigma'), for the hand method (common practice link)."""
        return self.lambda_ * np.log(10.0)

    @property
    def recompression_index(self) -> float:
        """Cr = kappa ln 10 (e - log10 sigma'), for the hand method (common practice link)."""
        return self.kappa * np.log(10.0)

    @property
    def critical_state_friction_angle(self) -> float:
        """phi_cs in degrees from M (triaxial compression): sin phi = 3 M / (6 + M)."""
        return float(np.degrees(np.arcsin(3.0 * self.M / (6.0 + self.M))))

    def k0_normally_consolidated(self) -> float:
        """K0 of one-dimensional normal compression predicted by this model.

        On the NCL at a constant stress ratio eta the strain-increment ratio must be that of
        1D compression, d eps_q / d eps_v = 2/3. With the elastic and plastic parts of Modified
        Cam Clay (flow ratio d eps_q^p / d eps_v^p = 2 eta / (M^2 - eta^2), Wood 1990, ch. 4,
        from memory) this reads, after multiplying by (1 + e),

            eta kappa 2 (1 + nu) / (9 (1 - 2 nu)) + 2 eta (lambda - kappa) / (M^2 - eta^2)
                = 2 lambda / 3,

        solved for eta in (0, M); K0 = (3 - eta) / (3 + 2 eta). With a constant shear modulus
        the ratio depends on p'; then Jaky's K0 = 1 - sin phi_cs is returned (Jaky 1944,
        J. Soc. Hung. Arch. Eng., common practice).
        """
        if self.poisson_ratio is None:
            return 1.0 - np.sin(np.radians(self.critical_state_friction_angle))
        from scipy.optimize import brentq

        nu, lam, kap, M = self.poisson_ratio, self.lambda_, self.kappa, self.M
        c_el = kap * 2 * (1 + nu) / (9 * (1 - 2 * nu))

        def g(eta):
            return eta * c_el + 2 * eta * (lam - kap) / (M * M - eta * eta) - 2 * lam / 3

        eta = brentq(g, 0.0, M * (1 - 1e-12), xtol=1e-15, rtol=1e-14)
        return (3 - eta) / (3 + 2 * eta)

    def _shear_modulus(self, p: np.ndarray, one_e: np.ndarray) -> np.ndarray:
        if self.shear_modulus is not None:
            return np.full(p.shape, float(self.shear_modulus))
        nu = self.poisson_ratio
        return 1.5 * (1 - 2 * nu) / (1 + nu) * one_e * p / self.kappa

    # ------------------------------------------------------- initial state
    def preconsolidation_from_vertical(self, vertical_preconsolidation,
                                       k0_nc: float | None = None) -> np.ndarray:
        """p'_c (npts,) from the vertical preconsolidation stress sigma'_p, kPa.

        The state reached by one-dimensional normal compression to sigma'_v = sigma'_p,
        sigma'_h = K0nc sigma'_p, is taken to lie on the yield ellipse:

            p'_p = sigma'_p (1 + 2 K0nc) / 3,   q_p = sigma'_p |1 - K0nc|,
            p'_c = p'_p + q_p^2 / (M^2 p'_p)   (f = 0 solved for p'_c).

        (The usual link between oedometer preconsolidation and the ellipse size; e.g. Wood
        1990, ch. 3 and 10, from memory.) ``k0_nc`` defaults to the model's own value
        (``k0_normally_consolidated``), so that an oedometer test on the computed state starts
        on the NCL with no transition.
        """
        sp_ = np.atleast_1d(np.asarray(vertical_preconsolidation, dtype=float))
        k = self.k0_normally_consolidated() if k0_nc is None else float(k0_nc)
        pp = sp_ * (1 + 2 * k) / 3
        qp = sp_ * abs(1 - k)
        return pp + qp * qp / (self.M ** 2 * pp)

    def _pc_at_least_current(self, stress0, pc) -> np.ndarray:
        # An overconsolidated K0 state may lie outside the ellipse built from sigma'_p (large
        # K0); the ellipse is then enlarged to pass through the current stress.
        p, q, _ = invariants(stress0)
        return np.maximum(pc, p + q * q / (self.M ** 2 * np.maximum(p, 1e-300)))

    def preconsolidation_from_ocr(self, stress0, ocr, k0_nc: float | None = None) -> np.ndarray:
        """p'_c (npts,) from the vertical overconsolidation ratio OCR = sigma'_p / sigma'_v0.

        ``stress0`` (npts, 4) tension positive, y vertical; sigma'_p -> p'_c as in
        ``preconsolidation_from_vertical``; never smaller than the ellipse through ``stress0``.
        """
        stress0 = np.asarray(stress0, dtype=float)
        ocr = np.asarray(ocr, dtype=float)
        if np.any(ocr < 1):
            raise InputError(f"overconsolidation ratio must be at least 1, got {ocr.min()}",
                             field=f"materials.{self.name}.ocr", fix="give OCR >= 1.")
        pc = self.preconsolidation_from_vertical(ocr * -stress0[:, 1], k0_nc)
        return self._pc_at_least_current(stress0, pc)

    def preconsolidation_from_margin(self, stress0, margin,
                                     k0_nc: float | None = None) -> np.ndarray:
        """p'_c (npts,) from a constant margin sigma'_p - sigma'_v0 (kPa, >= 0).

        As ``preconsolidation_from_ocr`` with sigma'_p = sigma'_v0 + margin.
        """
        stress0 = np.asarray(stress0, dtype=float)
        margin = np.asarray(margin, dtype=float)
        if np.any(margin < 0):
            raise InputError(f"preconsolidation margin must not be negative, got {margin.min()}"
                             " kPa", field=f"materials.{self.name}.margin",
                             fix="give sigma'_p - sigma'_v0 >= 0 in kPa.")
        pc = self.preconsolidation_from_vertical(margin - stress0[:, 1], k0_nc)
        return self._pc_at_least_current(stress0, pc)

    def initial_state(self, stress0, p_c0, e0=None, min_mean_stress: float = 0.0
                      ) -> CamClayState:
        """State at the start of the analysis.

        Parameters
        ----------
        stress0 : (npts, 4) effective stress, tension positive, kPa.
        p_c0 : (npts,) or scalar p'_c, kPa (see ``preconsolidation_from_ocr``).
        e0 : (npts,) or scalar void ratio; default the material's ``e0``.
        min_mean_stress : p' floor, kPa. The moduli are proportional to p', so a point with
            p' <= 0 has no stiffness; points below the floor are shifted isotropically up to it
            (and p'_c enlarged if needed). With the default 0 such points raise InputError.
        """
        f = f"materials.{self.name}"
        stress = np.array(stress0, dtype=float, ndmin=2)
        if stress.ndim != 2 or stress.shape[1] != 4:
            raise InputError(f"initial stress must have shape (npts, 4), got {stress.shape}",
                             field=f"{f}.initial_stress", fix="give [xx, yy, zz, xy] per point.")
        n = stress.shape[0]
        p, q, _ = invariants(stress)
        low = p < min_mean_stress
        if min_mean_stress > 0 and low.any():
            stress[low, :3] -= (min_mean_stress - p[low])[:, None]
            p, q, _ = invariants(stress)
        if np.any(~np.isfinite(p)) or np.any(p <= 0):
            raise InputError(f"{int(np.sum(~(p > 0)))} point(s) have p' <= 0 (tension); the "
                             "Cam Clay moduli vanish there", field=f"{f}.initial_stress",
                             fix="start from compressive effective stress, or give "
                                 "min_mean_stress (e.g. 1 kPa) in initial_state.")
        pc = np.broadcast_to(np.asarray(p_c0, dtype=float), (n,)).copy()
        if min_mean_stress > 0:
            pc = self._pc_at_least_current(stress, pc)
        if np.any(~np.isfinite(pc)) or np.any(pc <= 0):
            raise InputError("p'_c must be positive", field=f"{f}.pc",
                             fix="give the preconsolidation in kPa > 0.")
        fy = q * q / self.M ** 2 + p * (p - pc)
        out = fy > 1e-8 * pc * pc
        if out.any():
            raise InputError(f"{int(out.sum())} point(s) start outside the yield surface "
                             f"(first: point {int(np.flatnonzero(out)[0])})", field=f"{f}.pc",
                             fix="use preconsolidation_from_ocr / _from_margin, which enlarge "
                                 "p'_c to the current stress, or raise p'_c.")
        e = np.broadcast_to(np.asarray(self.e0 if e0 is None else e0, dtype=float), (n,)).copy()
        if np.any(~np.isfinite(e)) or np.any(e <= 0):
            raise InputError("void ratio must be positive", field=f"{f}.e0",
                             fix="give e0 > 0.")
        return CamClayState(stress, pc, e, e.copy())

    # -------------------------------------------------------------- queries
    def yield_function(self, state: CamClayState) -> np.ndarray:
        """f = q^2 / M^2 + p' (p' - p'_c) per point, kPa^2 (< 0 inside)."""
        p, q, _ = invariants(state.stress)
        return q * q / self.M ** 2 + p * (p - state.pc)

    def elastic_tangent(self, state: CamClayState) -> np.ndarray:
        """Elastic tangent (npts, 4, 4) at the state: K m m^T + 2 G P_dev, kPa.

        K = (1 + e_ref) p' / kappa; for the undrained first step on load application.
        """
        p = invariants(state.stress)[0]
        one_e = 1.0 + state.void_ratio_ref
        K = one_e * p / self.kappa
        G = self._shear_modulus(p, one_e)
        return (K[:, None, None] * np.outer(M_VOL, M_VOL)
                + 2 * G[:, None, None] * P_DEV)

    def permeability(self, state: CamClayState):
        """(kx, ky) per point, m/day, Taylor (1948): log10 k = log10 k0 - (e0 - e) / Ck."""
        e = state.void_ratio
        if self.permeability_change_index is None:
            factor = np.ones_like(e)
        else:
            factor = 10.0 ** (-(self.e0 - e) / self.permeability_change_index)
        return self.permeability_x * factor, self.permeability_y * factor

    def consolidation_coefficient(self, state: CamClayState,
                                  gamma_w: float = GAMMA_W) -> np.ndarray:
        """Estimate of the vertical c_v = k_y / (m_v gamma_w) per point, m2/day.

        m_v is the 1D elastic 1 / (K + 4G/3) inside the yield surface and the normally
        consolidated lambda / ((1 + e_ref) sigma'_v) on it (e - ln sigma'_v line of slope lambda,
        common practice link with Cc). An estimate for choosing time steps, not a result.
        """
        p = invariants(state.stress)[0]
        one_e = 1.0 + state.void_ratio_ref
        K = one_e * p / self.kappa
        G = self._shear_modulus(p, one_e)
        mv = 1.0 / (K + 4.0 * G / 3.0)
        on = self.yield_function(state) > -1e-6 * state.pc ** 2
        sv = np.maximum(-state.stress[:, 1], 1e-300)
        mv = np.where(on, self.lambda_ / (one_e * sv), mv)
        return self.permeability(state)[1] / (mv * gamma_w)

    # --------------------------------------------------------------- update
    def update(self, state: CamClayState, strain_increment: np.ndarray):
        """Effective stress, consistent tangent and new state after a strain increment.

        Parameters
        ----------
        state : the last converged state (not modified).
        strain_increment : (npts, 4) tension positive, engineering shear, from ``state``.

        Returns
        -------
        stress : (npts, 4) effective stress at the end of the increment, tension positive, kPa.
        tangent : (npts, 4, 4) d stress / d strain_increment, exact for this update, kPa.
        new_state : CamClayState at the end of the increment.

        Raises
        ------
        SolverError
            When the local return mapping does not converge (cut the step).
        """
        de = np.asarray(strain_increment, dtype=float)
        if de.shape != state.stress.shape:
            raise ValueError(f"strain increment shape {de.shape} != stress shape "
                             f"{state.stress.shape}")
        if not np.all(np.isfinite(de)):
            raise SolverError("non-finite strain increment passed to Modified Cam Clay")
        M2 = self.M ** 2
        p_n, _, s_n = invariants(state.stress)
        pc_n = state.pc
        one_e = 1.0 + state.void_ratio_ref
        kh = self.kappa / one_e                     # kappa-hat, elastic
        lh = (self.lambda_ - self.kappa) / one_e    # (lambda - kappa)-hat, hardening
        G = self._shear_modulus(p_n, one_e)
        dev = de @ P_DEV.T                          # (npts, 4) deviatoric strain, tensor comps
        dev_v = -(de[:, 0] + de[:, 1] + de[:, 2])   # compression positive

        e_new = state.void_ratio - one_e * dev_v    # exact solid mass balance, see notes
        if np.any(e_new <= 0.0):
            raise SolverError(f"strain increment compresses {int(np.sum(e_new <= 0))} point(s) "
                              "beyond zero void ratio; cut the step")
        # Elastic trial state (exponential pressure, constant-G_n deviator).
        p_tr = p_n * np.exp(dev_v / kh)
        s_tr = s_n + 2.0 * G[:, None] * dev
        q_tr = np.sqrt(1.5 * (s_tr * s_tr) @ W_NORM)
        f_tr = q_tr * q_tr / M2 + p_tr * (p_tr - pc_n)
        plastic = f_tr > _YIELD_TOL * pc_n * pc_n

        n = de.shape[0]
        zeta = np.zeros(n)
        dgam = np.zeros(n)
        # A = d(p, q) / d(p_tr, q_tr); identity for elastic points.
        A_pp = np.ones(n)
        A_pq = np.zeros(n)
        A_qp = np.zeros(n)
        A_qq = np.ones(n)
        if plastic.any():
            i = np.flatnonzero(plastic)
            z, g, J = self._return_map(p_tr[i], q_tr[i], pc_n[i], kh[i], lh[i],
                                       6.0 * G[i] / M2)
            zeta[i], dgam[i] = z, g
            J11, J12, J21, J22, p, q, pc, r = J
            det = J11 * J22 - J12 * J21
            pcn2 = pc_n[i] ** 2
            # Partial derivatives of (r1, r2 / pc_n^2) with respect to (p_tr, q_tr).
            ex = np.exp(-z / kh[i])                              # p / p_tr
            R1p = -2.0 * g * ex
            R2p = (2.0 * p - pc) * ex / pcn2
            R2q = 2.0 * q * r / M2 / pcn2
            dz_dp = -(J22 * R1p - J12 * R2p) / det
            dz_dq = J12 * R2q / det
            dg_dp = -(-J21 * R1p + J11 * R2p) / det
            dg_dq = -J11 * R2q / det
            a = 6.0 * G[i] / M2
            A_pp[i] = ex - p / kh[i] * dz_dp
            A_pq[i] = -p / kh[i] * dz_dq
            A_qp[i] = -q * a * r * dg_dp
            A_qq[i] = r - q * a * r * dg_dq

        ratio = 1.0 / (1.0 + 6.0 * G * dgam / M2)       # q / q_tr (radial return)
        p = p_tr * np.exp(-zeta / kh)
        pc = pc_n * np.exp(zeta / lh)
        s = ratio[:, None] * s_tr
        stress = s - p[:, None] * M_VOL

        # Consistent tangent: stress = -p m + sqrt(2/3) q n,  n = s_tr / |s_tr|.
        with np.errstate(invalid="ignore", divide="ignore"):
            norm_tr = np.sqrt(2.0 / 3.0) * q_tr
            nhat = np.where(norm_tr[:, None] > 1e-14 * (p_tr + pc_n)[:, None],
                            s_tr / norm_tr[:, None], 0.0)
        dptr = -(p_tr / kh)[:, None] * M_VOL                # d p_tr / d eps, (npts, 4)
        dqtr = (np.sqrt(6.0) * G)[:, None] * nhat           # d q_tr / d eps (n paired w/ eng.)
        dp = A_pp[:, None] * dptr + A_pq[:, None] * dqtr
        dq = A_qp[:, None] * dptr + A_qq[:, None] * dqtr
        D = (-M_VOL[None, :, None] * dp[:, None, :]
             + np.sqrt(2.0 / 3.0) * nhat[:, :, None] * dq[:, None, :]
             + (2.0 * G * ratio)[:, None, None]
             * (P_DEV[None] - nhat[:, :, None] * nhat[:, None, :]))

        new_state = CamClayState(stress, pc, e_new, state.void_ratio_ref.copy())
        return stress, D, new_state

    def _return_map(self, p_tr, q_tr, pc_n, kh, lh, a):
        """Local Newton on (zeta, dgamma) at plastic points, all at once.

        Residuals r1 = zeta - dgamma (2p - pc) (strain) and r2 = f / pc_n^2; converged points
        are frozen (mask), so a batch gives the same numbers as each point alone. Steps are
        scaled so that ln p' and ln p'_c change by at most 1 per iteration (guards the
        exponentials in large increments).
        """
        M2 = self.M ** 2
        pcn2 = pc_n * pc_n
        z = np.zeros_like(p_tr)
        g = np.zeros_like(p_tr)
        cap = np.minimum(kh, lh)
        active = np.ones(p_tr.shape, dtype=bool)
        for _ in range(_LOCAL_MAXIT):
            p = p_tr * np.exp(-z / kh)
            pc = pc_n * np.exp(z / lh)
            r = 1.0 / (1.0 + a * g)
            q = q_tr * r
            r1 = z - g * (2.0 * p - pc)
            r2 = (q * q / M2 + p * (p - pc)) / pcn2
            J11 = 1.0 + g * (2.0 * p / kh + pc / lh)
            J12 = -(2.0 * p - pc)
            J21 = (-(2.0 * p - pc) * p / kh - p * pc / lh) / pcn2
            J22 = (-2.0 * q * q * a * r / M2) / pcn2
            # f is checked against the CURRENT p'_c^2, the size of its round-off.
            conv = (np.abs(r1) <= _LOCAL_TOL * kh) & (np.abs(r2) * pcn2 <= _LOCAL_TOL * pc * pc)
            active &= ~conv
            if not active.any():
                return z, g, (J11, J12, J21, J22, p, q, pc, r)
            det = J11 * J22 - J12 * J21
            with np.errstate(divide="ignore", invalid="ignore"):
                dz = -(J22 * r1 - J12 * r2) / det
                dg = -(-J21 * r1 + J11 * r2) / det
                t = np.minimum(1.0, cap / np.abs(dz))
            t = np.where(np.isfinite(t), t, 1.0)
            g_new = g + t * dg
            # The multiplier cannot be negative: halve the step towards zero instead.
            g_new = np.where(g_new < 0.0, 0.5 * g, g_new)
            ok = active & np.isfinite(dz) & np.isfinite(g_new)
            z = np.where(ok, z + t * dz, z)
            g = np.where(ok, g_new, g)
            if np.any(active & ~ok):
                break
        raise SolverError(f"Modified Cam Clay return mapping did not converge at "
                          f"{int(active.sum())} of {active.size} plastic point(s)",
                          )
