"""Mutated copies of every example are read and meshed, or refused with the package's message.

The cases (tests/fuzz_models.py) change one to three fields of an example to odd values and run
in a worker process under an address-space limit and a CPU-time limit per case, so a runaway
allocation or a mesh of millions of elements cannot take the machine; a worker killed in a
case counts as a failure of that case.
"""

from __future__ import annotations

import pytest

import fuzz_models


def _check(records, count):
    bad = [r for r in records if r["outcome"] not in ("meshed", "refused")]
    listing = "\n".join(f"case {r['i']} ({r['example']}: {'; '.join(r['changes'])}): "
                        f"{r['outcome']} at {r['step']}: {r.get('message')}" for r in bad)
    assert not bad, f"{len(bad)} of {count} mutated models failed:\n{listing}"
    s = fuzz_models.summary(records)
    assert s["cases"] == count
    # The fuzz must reach the mesher often and the checks often, or it tests little.
    assert s["meshed"] >= 0.2 * count and s["refused"] >= 0.2 * count, s
    assert {r["example"] for r in records if r["outcome"] == "meshed"} == \
        {p.name for p in fuzz_models.EXAMPLES}
    return s


def test_every_mutated_example_meshes_or_ends_in_the_package_message():
    _check(fuzz_models.fuzz(200, seed=1), 200)


@pytest.mark.slow
def test_thousands_of_mutated_examples_mesh_or_end_in_the_package_message():
    _check(fuzz_models.fuzz(3000, seed=2), 3000)
