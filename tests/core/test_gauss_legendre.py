"""The 12-point Gauss–Legendre rule the Shockley charge integral uses (timing._GL_X/_GL_W) is
written out as numbers; checked bit for bit against numpy's own rule (the reference library,
``numpy.polynomial.legendre.leggauss``), and by what defines it: it integrates every polynomial
of degree <= 23 exactly over [-1, 1] (derived: the integral of x^k is 2/(k+1) for even k, 0 for odd)."""

from __future__ import annotations

import numpy as np

from selector.core import timing


def test_rule_is_numpys_leggauss_bit_for_bit():
    x, w = np.polynomial.legendre.leggauss(12)
    assert np.array_equal(timing._GL_X, x) and np.array_equal(timing._GL_W, w)


def test_rule_integrates_polynomials_up_to_degree_23_exactly():
    for k in range(24):
        exact = 2.0 / (k + 1) if k % 2 == 0 else 0.0
        got = float(np.sum(timing._GL_W * timing._GL_X ** k))
        assert abs(got - exact) <= 1e-14, k
    # and not degree 24 (so the check above can tell a 12-point rule from a wrong one)
    assert abs(float(np.sum(timing._GL_W * timing._GL_X ** 24)) - 2.0 / 25) > 1e-8
