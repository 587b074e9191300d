"""Differential settlement and angular distortion (solver.hand.differential)."""

from __future__ import annotations

import numpy as np
import pytest

from solver.errors import InputError
from solver.hand import differential as di
from solver.hand.rate import degree_of_consolidation


def test_first_exceedance_is_interpolated_between_output_times():
    # Linear between outputs (common practice): 0.001 at 10 d, 0.003 at 20 d, limit 0.002
    # -> 10 + (0.002 - 0.001)/(0.003 - 0.001) * 10 = 15 d.
    t = [0.0, 10.0, 20.0, 30.0]
    v = [0.0, 0.001, 0.003, 0.004]
    assert di.first_exceedance_time(t, v, 0.002) == pytest.approx(15.0)


def test_limit_never_exceeded_gives_nan_and_none():
    t = [0.0, 10.0, 20.0]
    v = [0.0, 0.001, 0.0015]
    assert np.isnan(di.first_exceedance_time(t, v, 1.0 / 500.0))
    check = di.check_distortion_limits(t, v)
    assert [c.exceeded for c in check] == [False, False, False]
    assert check[0].first_exceeded_days is None and check[0].max_distortion == pytest.approx(0.0015)


def test_limit_exceeded_at_the_first_time_reports_that_time():
    assert di.first_exceedance_time([5.0, 10.0], [0.01, 0.02], 0.002) == 5.0


def test_default_limits_are_bjerrum_values():
    # Bjerrum (1963), Allowable settlement of structures (from memory): 1/500 safe limit
    # where cracking is not permissible, 1/300 first cracking of panel walls, 1/150
    # structural damage of general buildings.
    assert sorted(di.DEFAULT_DISTORTION_LIMITS.values()) == pytest.approx([1 / 500, 1 / 300, 1 / 150])


def test_first_exceedance_works_column_by_column():
    t = np.array([0.0, 10.0, 20.0])
    v = np.array([[0.0, 0.0, 0.0], [0.002, 0.004, 0.0], [0.006, 0.006, 0.001]])
    got = di.first_exceedance_time(t, v, 0.003)
    np.testing.assert_allclose(got, [12.5, 7.5, np.nan])


def test_two_probes_through_consolidation():
    # Two probes 10 m apart settle 0.30 m and 0.10 m finally with the same U(t) (Terzaghi
    # 1925, cv = 0.1 m2/day, H_dr = 5 m); distortion = 0.2 U / 10 = 0.02 U, so the 1/150
    # limit (0.006667) is passed at U = 1/3, i.e. Tv = pi/4 U^2 = 0.087266 (exact for
    # U < 0.6, Terzaghi 1925) -> t = Tv H^2 / cv = 21.8166 d, to output-interpolation accuracy.
    t = np.linspace(0.0, 2000.0, 2001)
    u = degree_of_consolidation(t, 0.1, 5.0)
    hist = di.differential_between_probes(t, 0.3 * u, 0.1 * u, 10.0)
    np.testing.assert_allclose(hist.differential_settlement_m, 0.2 * u)
    by_name = {c.description: c for c in hist.checks}
    damage = by_name["structural damage of general buildings"]
    assert damage.first_exceeded_days == pytest.approx(np.pi / 4 / 9 * 25 / 0.1, abs=0.02)
    assert "qualified engineer" in hist.caution


def test_distortion_along_a_line_takes_the_worst_pair():
    # Probes at 0, 5, 15 m; final settlements 0.10, 0.12, 0.20 m -> distortions 0.004, 0.008.
    x = [0.0, 5.0, 15.0]
    s = np.outer([0.0, 0.5, 1.0], [0.10, 0.12, 0.20])
    d = di.distortion_along_line(x, s)
    np.testing.assert_allclose(d[-1], [0.004, 0.008])
    checks = di.check_distortion_limits([0.0, 50.0, 100.0], d, {"user limit": 0.006})
    # worst pair 0.008 U(t): 0 -> 0.004 -> 0.008, crossing 0.006 half way from 50 to 100 d
    assert checks[0].first_exceeded_days == pytest.approx(75.0)


def test_bad_input_names_the_field():
    with pytest.raises(InputError) as err:
        di.angular_distortion(0.1, 0.0, 0.0)
    assert err.value.field == "distance"
    with pytest.raises(InputError):
        di.first_exceedance_time([0.0, 0.0], [0.0, 1.0], 0.5)
