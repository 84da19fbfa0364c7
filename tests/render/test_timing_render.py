"""The find tables' errors in the asker's terms: the option's ``errors`` key (agreed JSON) when the
search wrote one, else frequency % and duty points computed from predicted against target."""

from __future__ import annotations

import pytest

from selector.render.timing import error_columns, error_text, errors_of

TARGET = {"mode": "astable", "frequency_hz": 1200.0, "duty": 0.65, "t_high_s": 0.65 / 1200, "t_low_s": 0.35 / 1200}


def test_errors_computed_from_predicted_when_absent():
    opt = {"predicted": {"frequency_hz": 1192.5, "duty": 0.636}}
    e = errors_of("astable", TARGET, opt)
    assert e["frequency"] == pytest.approx(1192.5 / 1200 - 1)   # −0.625 %
    assert e["duty_points"] == pytest.approx(0.636 - 0.65)      # 1.4 points low
    assert [error_text(k, e[k]) for k in error_columns("astable", TARGET)] == ["-0.62 %", "-1.4 pt"]


def test_the_saved_errors_key_wins():
    opt = {"predicted": {"frequency_hz": 1192.5, "duty": 0.636}, "errors": {"frequency": 0.02, "duty_points": -0.003}}
    assert errors_of("astable", TARGET, opt) == {"frequency": 0.02, "duty_points": -0.003}


def test_no_duty_column_without_a_duty_target_and_monostable_rc():
    assert error_columns("astable", dict(TARGET, duty=None)) == ["frequency"]
    assert errors_of("monostable", {"mode": "monostable", "width_s": 0.15},
                     {"predicted": {"width_s": 0.1515}})["width"] == pytest.approx(0.01)
    rc = {"mode": "rc", "corner_hz": 1000.0, "tau_s": 1.59e-4}
    assert error_columns("rc", rc) == ["corner"]
    assert errors_of("rc", rc, {"predicted": {"tau_s": 1.6e-4, "corner_hz": 995.0}})["corner"] == pytest.approx(-0.005)
