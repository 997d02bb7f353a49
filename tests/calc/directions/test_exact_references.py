"""The closed forms in ``exact.py`` against the values their sources print."""

from __future__ import annotations

import math

import pytest

from tests.calc.directions.exact import fork_warping_omega, rod_omegas, tip_inertia_betas


@pytest.mark.parametrize(("mu", "beta"), [(0.1, 0.3111), (1.0, 0.8603), (10.0, 1.4289)])
def test_tip_inertia_roots_as_printed(mu, beta):
    # beta tan(beta) = mu: Thomson, Theory of Vibration with Applications, section 9.2
    # (4 decimals, as quoted in the issue; from memory).
    first = tip_inertia_betas(mu, 3)
    assert first[0] == pytest.approx(beta, abs=5e-5)
    assert all(b * math.tan(b) == pytest.approx(mu, rel=1e-12) for b in first)
    assert first[1] > math.pi and first[2] > 2 * math.pi


def test_rod_limits():
    # a tiny tip inertia leaves the held-free rod (beta -> (2n - 1) pi/2); a huge one makes
    # beta^2 -> mu (a spring and a mass: omega^2 = k_rod / tip inertia); common practice
    assert tip_inertia_betas(1e9, 2)[0] == pytest.approx(math.pi / 2, rel=1e-8)
    assert tip_inertia_betas(1e-8, 1)[0] == pytest.approx(math.sqrt(1e-8), rel=1e-8)
    assert rod_omegas("held", "free", 2.0, 100.0, 2) == pytest.approx([25 * math.pi, 75 * math.pi])
    assert rod_omegas("free", "free", 2.0, 100.0, 1) == pytest.approx([50 * math.pi])


def test_fork_warping_reduces_to_saint_venant():
    # Cw = 0: omega = n pi c / L with c^2 = G J/(rho Ip)
    w = fork_warping_omega(2, 3.0, 80e9, 1e-7, 200e9, 0.0, 7850.0, 1e-5)
    assert w == pytest.approx(2 * math.pi / 3.0 * math.sqrt(80e9 * 1e-7 / (7850.0 * 1e-5)))
