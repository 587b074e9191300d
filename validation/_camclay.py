"""The clay and the sources shared by the Modified Cam Clay element cases.

One set of parameters for all four laboratory paths (isotropic, drained and undrained
triaxial, oedometer): lambda = 0.2, kappa = 0.04, M = 1.2, e0 = 1.5, nu = 0.25, a soft clay
of the kind the model is used for (invented values). The paths are driven at one material
point by :mod:`solver.materials.driver`, no finite elements: these cases check the
constitutive update that every Cam Clay element of a run uses.
"""

from __future__ import annotations

from solver.materials.camclay import CamClayMaterial, k0_stress

LAMBDA, KAPPA, M, E0, NU = 0.2, 0.04, 1.2, 1.5, 0.25

ROSCOE_BURLAND = ("Roscoe and Burland (1968) On the generalised stress-strain behaviour of "
                  "'wet' clay, in Engineering Plasticity")
WOOD = "Wood (1990) Soil Behaviour and Critical State Soil Mechanics"


def clay() -> CamClayMaterial:
    return CamClayMaterial(lambda_=LAMBDA, kappa=KAPPA, e0=E0, M=M, poisson_ratio=NU,
                           name="clay")


def isotropic_state(mat: CamClayMaterial, p0, pc0):
    """Points at isotropic effective stress p0 (kPa, compression positive) with p'_c = pc0."""
    return mat.initial_state(k0_stress(p0, 1.0), pc0)
