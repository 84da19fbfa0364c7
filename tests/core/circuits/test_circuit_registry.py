"""Every circuit kind in the registry supplies every part of the protocol
(selector/core/circuits/base.py), so a half-registered circuit fails here, loudly."""

from __future__ import annotations

import dataclasses

import math

import numpy as np
import pytest

from selector.core import circuits
from selector.core.circuits.base import KERNELS, ONE_RESISTOR, TWO_RESISTOR, Limits, Settings, Target
from selector.core import netlist as sp
from selector.core.spice import build_netlist

KINDS = list(circuits.REGISTRY.values())
KERNEL_METHODS = {TWO_RESISTOR: ("t_low", "rb_for_low", "rb_ideal", "ra_for_high", "times2"),
                  ONE_RESISTOR: ("r_ideal", "error1", "r_bounds1")}
OUTPUTS = {"astable": ("frequency_hz", "duty", "t_high_s", "t_low_s"), "monostable": ("width_s",),
           "rc": ("tau_s", "corner_hz")}


def _settings(kind) -> Settings:
    # a supply every kind accepts (bipolar 555: 4.5-16 V, 74HC-type: 2-6 V)
    return Settings(chip="cmos", vcc=5.0, diode_vf=0.65, options={})


def _target(kind) -> Target:
    if kind.mode == "astable":
        return Target.astable(1e3, 0.6)
    if kind.mode == "monostable":
        return Target("monostable", width=1e-3)
    return Target("rc", tau=1e-3)


@pytest.mark.parametrize("kind", KINDS, ids=lambda k: k.key)
def test_identity_and_texts(kind):
    assert kind.key and kind.name and kind.formula
    assert circuits.get(kind.key) is kind
    assert kind.mode in OUTPUTS and kind.outputs == OUTPUTS[kind.mode]
    assert kind.kernel in KERNELS
    assert kind.roles[-1] == "C" and set(kind.resistor_roles) <= {"RA", "RB", "R"}
    assert set(kind.charging_roles) <= set(kind.resistor_roles)
    if kind.mode != "rc":  # a device to wire: the BOM says how
        assert kind.wiring.startswith("Connections:")
        assert kind.bom_obtain(_settings(kind)), "a circuit with a device lists it in the BOM"
    for opt in kind.options:
        assert opt.name and opt.help


@pytest.mark.parametrize("kind", KINDS, ids=lambda k: k.key)
def test_kernel_methods_and_limits(kind):
    for name in KERNEL_METHODS[kind.kernel]:
        assert callable(getattr(kind, name, None)), f"{kind.key} lacks {name} for its kernel"
    lim = kind.limits(_settings(kind))
    assert isinstance(lim, Limits) and lim.vcc == 5.0
    c = np.array([1e-9, 1e-8])
    target = _target(kind)
    if kind.kernel == ONE_RESISTOR:
        r = kind.r_ideal(target, c, lim)
        err, _th, _tl, _t = kind.error1(r, c, target, lim)
        assert np.all(np.isfinite(r)) and np.all(r > 0)
        lo, hi = kind.r_bounds1(c, lim)
        assert lo.shape == hi.shape == c.shape
        if not kind.duty_fixed:  # the ideal R hits the target exactly
            assert np.allclose(err, 0.0, atol=1e-12)
    else:
        # rb_ideal is the guess for an ideal discharge switch (RD = 0) ...
        ideal = dataclasses.replace(lim, discharge_ohms=0.0)
        rb = kind.rb_ideal(target, c)
        ra = kind.ra_for_high(np.full(2, target.t_high), rb, c, ideal)
        th, tl = kind.times2(ra, rb, c, ideal)
        assert np.allclose(th, target.t_high, rtol=1e-12) and np.allclose(tl, target.t_low, rtol=1e-12)
        # ... and with the family's RD, t_low and rb_for_low are inverses and times2 agrees
        assert lim.discharge_ohms > 0
        rb2 = kind.rb_for_low(np.full(2, target.t_low), ra, c, lim)
        assert np.allclose(kind.t_low(ra, rb2, c, lim), target.t_low, rtol=1e-12)
        assert np.allclose(kind.times2(ra, rb2, c, lim)[1], target.t_low, rtol=1e-12)


@pytest.mark.parametrize("kind", KINDS, ids=lambda k: k.key)
def test_model_is_vectorised_and_uncertain_inputs_have_bands(kind):
    lim = kind.limits(_settings(kind))
    v = {role: np.array([1e4, 2e4, 3e4]) for role in kind.resistor_roles}
    v["C"] = np.array([1e-8, 1e-8, 2e-8])
    outs = kind.model(v, lim, {})
    assert len(outs) == len(kind.outputs)
    for o in outs:
        assert np.shape(o) == (3,) and np.all(np.isfinite(o))
    for u in kind.uncertain(lim):
        assert u.nominal > 0 and 0 <= u.tol_minus < 1 and u.tol_plus >= 0
        drawn = kind.model(v, lim, {u.name: np.full(3, u.nominal * (1 + u.tol_plus))})
        assert not np.allclose(drawn[0], outs[0]), f"{u.name} does not reach the model"


@pytest.mark.parametrize("kind", KINDS, ids=lambda k: k.key)
def test_spice_netlist_and_reading(kind):
    settings = _settings(kind)
    lim = kind.limits(settings)
    nets = {role: sp.Network(role, "single", (sp.Part(1e4),), 1e4) for role in kind.resistor_roles}
    nets["C"] = sp.Network("C", "single", (sp.Part(1e-8),), 1e-8)
    v = {role: np.array([n.value]) for role, n in nets.items()}
    expected = {name: float(x[0]) for name, x in zip(kind.outputs, kind.model(v, lim, {}))}
    c = sp.Circuit(kind.key, nets, kind.spice_chip(settings, None), 0.65, expected, extra=dict(lim.extra))
    nl = build_netlist(c, cycles=2)
    assert nl.text.rstrip().endswith(".end") and nl.measures
    assert kind.spice_header(c).startswith("*")
    names, levels = kind.spice_waveform(c)
    assert names and all(math.isfinite(level) for _n, level in levels)
    assert isinstance(kind.spice_warnings(c), list)
    assert kind.model_note


def test_cli_choices_come_from_the_registry():
    from selector.cli.find_timing import ConnectionChoice
    from selector.services.find_timing import CONNECTIONS

    astables = [k.key for k in circuits.for_mode("astable")]
    assert [c.value for c in ConnectionChoice] == ["auto"] + astables
    assert list(CONNECTIONS) == ["auto"] + astables
    assert "schmitt-inverter" in astables


def test_registry_import_stays_light():
    """`selector --help` must stay quick: the registry is read at start-up, so it must not pull
    numpy in (checked in a fresh interpreter)."""
    import subprocess
    import sys

    code = "import sys, selector.core.circuits; print('numpy' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


@pytest.mark.parametrize("kind", KINDS, ids=lambda k: k.key)
def test_target_fields_are_checked_and_written(kind):
    """Each kind validates its target fields, builds the Target and writes its JSON form."""
    from selector.core.errors import OutOfRange
    from selector.services.find_timing import TimingRequest

    fields = {"astable": dict(freq_hz=1e3, duty=0.6, connection=kind.key),
              "monostable": dict(width_s=1e-3), "rc": dict(tau_s=1e-3)}[kind.mode]
    req = TimingRequest(mode=kind.mode, vcc=5.0, chip="cmos", **fields)
    kind.check_target(req)
    target = kind.make_target(req, req.settings)
    doc = kind.target_json(req, target)
    assert doc["mode"] == kind.mode
    bad = {k: (-1.0 if isinstance(v, float) else v) for k, v in fields.items()}
    with pytest.raises(OutOfRange):
        kind.check_target(TimingRequest(mode=kind.mode, vcc=5.0, **bad))
