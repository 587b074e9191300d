"""Linear isotropic elasticity of the soil skeleton, with the region's hydraulic properties.

Every material offers ``update(state, strain_increment) -> (stress, tangent, new_state)`` over
all quadrature points of a region at once; for linear elasticity the tangent is constant.
Stress and strain vectors are [xx, yy, zz, xy] (engineering shear), tension positive.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError

GAMMA_W = 9.81  # unit weight of water, kN/m3 (common practice value)


@dataclass
class ElasticMaterial:
    """Drained linear elastic skeleton and Darcy flow.

    Parameters
    ----------
    youngs_modulus : drained Young's modulus E', kPa.
    poisson_ratio : drained Poisson's ratio nu', in (-1, 0.5).
    permeability_x, permeability_y : hydraulic conductivity, m/day (``permeability_y`` defaults
        to ``permeability_x``).
    biot_coefficient : alpha in (0, 1]; 1 for incompressible grains.
    storage : specific storage 1/M (Biot modulus M), 1/kPa; 0 for incompressible constituents.
    unit_weight : total unit weight, kN/m3 (used for self-weight and construction lifts).
    name : label used in messages.
    """

    youngs_modulus: float
    poisson_ratio: float
    permeability_x: float = 1e-4
    permeability_y: float | None = None
    biot_coefficient: float = 1.0
    storage: float = 0.0
    unit_weight: float = 18.0
    name: str = "material"

    def __post_init__(self):
        if self.permeability_y is None:
            self.permeability_y = self.permeability_x
        self.check()

    @classmethod
    def from_constrained_modulus(cls, constrained_modulus: float, poisson_ratio: float,
                                 **kw) -> "ElasticMaterial":
        """Build from the oedometer (constrained) modulus E_oed = E(1-nu)/((1+nu)(1-2nu)), kPa."""
        nu = poisson_ratio
        E = constrained_modulus * (1 + nu) * (1 - 2 * nu) / (1 - nu)
        return cls(E, nu, **kw)

    def check(self) -> None:
        f = self.name
        if not np.isfinite(self.youngs_modulus) or self.youngs_modulus <= 0:
            raise InputError(f"Young's modulus must be positive, got {self.youngs_modulus} kPa",
                             field=f"materials.{f}.youngs_modulus", fix="give E > 0 in kPa.")
        if not (-1.0 < self.poisson_ratio < 0.5):
            raise InputError(f"drained Poisson's ratio must lie in (-1, 0.5), got "
                             f"{self.poisson_ratio}", field=f"materials.{f}.poisson_ratio",
                             fix="use a drained value such as 0.3; undrained behaviour comes "
                                 "from the pore water, not from nu = 0.5.")
        for key in ("permeability_x", "permeability_y"):
            k = getattr(self, key)
            if not np.isfinite(k) or k <= 0:
                raise InputError(f"permeability must be positive, got {k} m/day",
                                 field=f"materials.{f}.{key}",
                                 fix="give k > 0 in m/day; use a very small value for a "
                                     "nearly impermeable layer.")
        if not (0.0 < self.biot_coefficient <= 1.0):
            raise InputError(f"Biot coefficient must lie in (0, 1], got {self.biot_coefficient}",
                             field=f"materials.{f}.biot_coefficient", fix="use 1 for soils.")
        if self.storage < 0:
            raise InputError(f"storage must not be negative, got {self.storage} 1/kPa",
                             field=f"materials.{f}.storage", fix="use 0 for incompressible "
                                                                  "constituents.")

    # ------------------------------------------------------------ derived
    @property
    def shear_modulus(self) -> float:
        return self.youngs_modulus / (2 * (1 + self.poisson_ratio))

    @property
    def bulk_modulus(self) -> float:
        return self.youngs_modulus / (3 * (1 - 2 * self.poisson_ratio))

    @property
    def constrained_modulus(self) -> float:
        """Oedometer modulus E_oed = K + 4G/3, kPa."""
        return self.bulk_modulus + 4 * self.shear_modulus / 3

    def consolidation_coefficient(self, gamma_w: float = GAMMA_W) -> float:
        """Vertical c_v = k_y E_oed / gamma_w, m2/day (incompressible constituents)."""
        return self.permeability_y * self.constrained_modulus / gamma_w

    def elasticity_matrix(self) -> np.ndarray:
        """D (4, 4) for [xx, yy, zz, xy] with engineering shear strain, kPa."""
        G = self.shear_modulus
        lam = self.bulk_modulus - 2 * G / 3
        D = np.zeros((4, 4))
        D[:3, :3] = lam
        D[[0, 1, 2], [0, 1, 2]] += 2 * G
        D[3, 3] = G
        return D

    def update(self, state, strain_increment: np.ndarray):
        """Stress increment and tangent at all points: (npts, 4) -> (npts, 4), (4, 4)."""
        D = self.elasticity_matrix()
        return strain_increment @ D.T, D, state


@dataclass
class ScaledElastic:
    """A linear elastic skeleton whose stiffness varies from point to point: ``base``'s
    elasticity matrix times ``scale`` (npts,) (a constrained modulus per element taken from
    the oedometer, :mod:`solver.oedometer_stiffness`), for the incremental Newton path."""

    base: ElasticMaterial
    scale: np.ndarray

    def update(self, state, strain_increment: np.ndarray):
        """Stress increment (npts, 4) and tangent (npts, 4, 4) at all points."""
        D = self.base.elasticity_matrix()
        s = np.asarray(self.scale, float)
        return (strain_increment @ D.T) * s[:, None], D[None] * s[:, None, None], state
