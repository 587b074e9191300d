"""The validation cases at the quick level: every compared quantity within its tolerance.

Each case names its published source (see validation/*.py); the slow marker runs the full
level with finer meshes and steps.
"""

import pytest

from solver.validation import CASE_MODULES, load_case


@pytest.mark.parametrize("name", CASE_MODULES)
def test_validation_case_passes_quick(name, tmp_path):
    checks = load_case(name).run(quick=True, out_dir=tmp_path)
    assert checks, "a case must compare something"
    failed = [f"{c.quantity}: {c.error:.3g} > {c.tolerance:.3g}" for c in checks if not c.passed]
    assert not failed, failed
    assert all(c.source for c in checks)
    assert (tmp_path / f"{name}.png").stat().st_size > 10_000


@pytest.mark.slow
@pytest.mark.parametrize("name", CASE_MODULES)
def test_validation_case_passes_full(name, tmp_path):
    checks = load_case(name).run(quick=False, out_dir=tmp_path)
    failed = [f"{c.quantity}: {c.error:.3g} > {c.tolerance:.3g}" for c in checks if not c.passed]
    assert not failed, failed
