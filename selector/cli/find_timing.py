"""``find astable``, ``find monostable`` and ``find rc``: parse the options, call
selector.services.find_timing.find_timing once, render with selector.render.timing."""

from __future__ import annotations

import inspect
from enum import Enum
from typing import Optional

import typer

from selector.cli._choices import ASTABLE_CONNECTIONS, ASTABLE_OPTIONS, CHIP_FAMILIES
from selector.cli._common import db_arg, fail, handles_errors, json_text, whole
from selector.core.limits import MAX_BOARDS, MAX_SAMPLES, MAX_SEED, MAX_TOP
from selector.core.parts import DIODE_N_DEFAULT, DIODE_TYPES, DIODE_VF_DEFAULT

# The registry (core.circuits) and the chip table are imported only when a search runs: the
# command line is built from their copy in _choices (checked against them by a test).

ConnectionChoice = Enum("ConnectionChoice",
                        {"auto": "auto", **{key.replace("-", "_"): key for key, _ in ASTABLE_CONNECTIONS}},
                        type=str)
"""--connection choices: auto and every astable circuit kind in the registry."""

_CONNECTION_HELP = "Wiring: " + ", ".join(text for _, text in ASTABLE_CONNECTIONS if text) + ", or auto."


ChipChoice = Enum("ChipChoice", {key: key for key in CHIP_FAMILIES}, type=str)
"""--chip choices: every 555 family in core.chips (a new family is one entry there)."""


DiodeChoice = Enum("DiodeChoice", {k: k for k in DIODE_TYPES}, type=str)


class DistributionChoice(str, Enum):
    uniform = "uniform"
    normal = "normal"


def _value(text: str, unit: str, option: str) -> float:
    from selector.core.errors import UnparseableValue
    from selector.core.notation import parse_value

    try:
        return parse_value(text, None, unit)
    except UnparseableValue as e:
        raise UnparseableValue(f"{option}: {e}") from None


def _fraction(text: str, option: str) -> float:
    from selector.core.errors import UnparseableValue
    from selector.core.notation import parse_fraction

    try:
        return parse_fraction(text)
    except UnparseableValue as e:
        raise UnparseableValue(f"{option}: {e}") from None


def _circuit_options(connection: str, given: dict) -> dict:
    """Parse the circuit options given on the command line; an option of another circuit kind
    than the one searched is a usage error (exit 2)."""

    from selector.core import circuits

    kind = circuits.REGISTRY.get(connection)
    own = {o.field for o in kind.options} if kind is not None else set()
    out = {}
    for kind_ in circuits.for_mode("astable"):
        for opt in kind_.options:
            raw = given.get(opt.field)
            if raw is None:
                continue
            if opt.field not in own:
                fail(f"--{opt.name} applies only to --connection {kind_.key}", 2)
            raw = raw.value if isinstance(raw, Enum) else raw
            out[opt.field] = _value(raw, opt.unit, f"--{opt.name}") if opt.unit else raw
    return out


def _with_circuit_options(fn):
    """Give a command every option the astable circuit kinds declare (``CliOption``), in place
    of its ``**`` parameter (which receives them); typer reads the signature."""
    sig = inspect.signature(fn)
    params = [p for p in sig.parameters.values() if p.kind is not inspect.Parameter.VAR_KEYWORD]
    for name, help_text, metavar, choices in ASTABLE_OPTIONS:
        field = name.replace("-", "_")
        if choices:
            annotation = Optional[Enum(field + "Choice", {c: c for c in choices}, type=str)]
        else:
            annotation = Optional[str]
        default = typer.Option(None, f"--{name}", help=help_text, **({"metavar": metavar} if not choices else {}))
        params.append(inspect.Parameter(field, inspect.Parameter.KEYWORD_ONLY, default=default,
                                        annotation=annotation))
    fn.__signature__ = sig.replace(parameters=params)
    return fn


def _run(ctx: typer.Context, search: dict, vcc_tol: Optional[str], **fields) -> None:
    from selector.core.notation import VOLT
    from selector.render.progress import LazyProgress
    from selector.services.find_timing import TimingRequest, find_timing
    from selector.store.db import open_engine, resolve_url

    if vcc_tol is not None:
        fields.setdefault("options", {})["vcc_tol"] = _fraction(vcc_tol, "--vcc-tol")
    vcc = _value(fields.pop("vcc_text"), VOLT, "--vcc")
    vf_text = fields.pop("vf_text", None)
    vf = _value(vf_text, VOLT, "--diode-vf") if vf_text is not None else None
    search = dict(search)
    as_json, explain = search.pop("as_json"), search.pop("explain")
    accept = _fraction(search.pop("accept"), "--accept")
    search["distribution"] = search["distribution"].value
    req = TimingRequest(vcc=vcc, diode_vf=vf, accept=accept, **search, **fields)
    req.check()  # before the database is opened: a bad option changes nothing
    engine = open_engine(resolve_url(db_arg(ctx)))
    progress = LazyProgress()
    try:
        report = find_timing(engine, req, progress)
    finally:
        progress.close()
        engine.dispose()
    if as_json:
        typer.echo(json_text(report.json, indent=2))
    else:
        from selector.render.timing import print_report

        print_report(report, explain=explain)


_COMMON_HELP = {
    "chip": "Chip family: its supply range, limits and output levels apply.",
    "vcc": "Supply voltage, e.g. 9V, 12, 5V.",
    "max_parts": "Largest number of parts per network (1-3).",
    "top": "How many options to show.",
    "boards": "Build this many boards: every part count is multiplied.",
    "all_networks": "Also offer networks with a token part (one whose share at its joint is below half the largest tolerance there).",
    "accept": "Acceptance band for the yield, e.g. 5% or 0.05.",
    "json": "Print the options as JSON only.",
    "trim": "Always add up to 3 options with a trimmer from stock in series with a fixed network, set on the bench (offered anyway when no fixed option reaches a 90 % yield).",
    "explain": "Explain the figures under the table: formulas, errors, worst case and yield, limits, ranking, full cautions.",
    "distribution": "How part values spread inside their tolerance for the yield.",
    "seed": "Seed of the yield simulation (same seed, same figures).",
    "samples": "Simulated builds per option (at least 10000).",
    "vcc_tol": "Supply tolerance the yield draws the chip's supply drift across, e.g. 5% (default 5 %, a regulated supply).",
}



def astable(
    ctx: typer.Context,
    freq: str = typer.Option(..., "--freq", metavar="F", help="Target frequency, e.g. 1.2k, 1.2kHz, 440."),
    duty: Optional[str] = typer.Option(None, "--duty", metavar="D", help="Fraction of the period the output is HIGH, e.g. 65% or 0.65 (optional where the circuit fixes the duty: output-fed, schmitt-inverter)."),
    connection: ConnectionChoice = typer.Option(ConnectionChoice.auto, "--connection", help=_CONNECTION_HELP),
    chip: ChipChoice = typer.Option(ChipChoice.bipolar, "--chip", help=_COMMON_HELP["chip"]),
    vcc: str = typer.Option("9V", "--vcc", metavar="V", help=_COMMON_HELP["vcc"]),
    vcc_tol: Optional[str] = typer.Option(None, "--vcc-tol", metavar="PCT", help=_COMMON_HELP["vcc_tol"]),
    diode_vf: Optional[str] = typer.Option(None, "--diode-vf", metavar="V", help=f"Forward drop of the steering diode at 1 mA (default {DIODE_VF_DEFAULT:g} V, small-signal silicon)."),
    diode_n: Optional[str] = typer.Option(None, "--diode-n", metavar="N", help=f"Ideality factor of the steering diode (default {DIODE_N_DEFAULT:g}; about 1.05 for a Schottky)."),
    diode_type: Optional[DiodeChoice] = typer.Option(None, "--diode", help="Steering diode type: sets --diode-vf and --diode-n unless they are given."),
    **more,
) -> None:
    """Find RA, RB and C networks in stock for an astable (free-running) 555 at a frequency and duty."""
    from selector.core import circuits

    kind = circuits.REGISTRY.get(connection.value)
    if duty is None and not (kind is not None and kind.duty_fixed):
        fail(f"--duty is required for --connection {connection.value} (only a circuit that fixes its "
             "own duty can do without)", 2)
    search = _search_values(more)
    options = _circuit_options(connection.value, more)
    if diode_type is not None:
        vf_typ, n_typ = DIODE_TYPES[diode_type.value]
        diode_vf = f"{vf_typ:g}V" if diode_vf is None else diode_vf
        diode_n = n_typ if diode_n is None else diode_n
    if diode_n is not None:
        try:
            options["diode_n"] = float(str(diode_n).strip())
        except ValueError:
            fail(f"--diode-n {diode_n!r}: expected a number such as 1.9 (the diode's ideality factor)", 2)
    _run(ctx, search, vcc_tol, mode="astable", freq_hz=_value(freq, "Hz", "--freq"),
         duty=_fraction(duty, "--duty") if duty is not None else None,
         connection=connection.value, chip=chip.value, vcc_text=vcc, vf_text=diode_vf, options=options)


def monostable(
    ctx: typer.Context,
    width: str = typer.Option(..., "--width", metavar="T", help="Pulse width, e.g. 150ms, 2.5s, 0.1."),
    chip: ChipChoice = typer.Option(ChipChoice.bipolar, "--chip", help=_COMMON_HELP["chip"]),
    vcc: str = typer.Option("9V", "--vcc", metavar="V", help=_COMMON_HELP["vcc"]),
    vcc_tol: Optional[str] = typer.Option(None, "--vcc-tol", metavar="PCT", help=_COMMON_HELP["vcc_tol"]),
    **search,
) -> None:
    """Find R and C networks in stock for a monostable (one-shot) 555 pulse width."""
    _run(ctx, search, vcc_tol, mode="monostable", width_s=_value(width, "s", "--width"), chip=chip.value,
         vcc_text=vcc)


def rc(
    ctx: typer.Context,
    tau: Optional[str] = typer.Option(None, "--tau", metavar="T", help="Time constant R·C, e.g. 10ms."),
    corner: Optional[str] = typer.Option(None, "--corner", metavar="F", help="Corner frequency 1/(2π·R·C), e.g. 1kHz."),
    vcc: str = typer.Option("9V", "--vcc", metavar="V", help="Working voltage across the parts (for their ratings)."),
    **search,
) -> None:
    """Find R and C networks in stock for an RC time constant or corner frequency (give one)."""
    if (tau is None) == (corner is None):
        fail("give exactly one of --tau or --corner", 2)
    _run(ctx, search, None, mode="rc",
         tau_s=_value(tau, "s", "--tau") if tau is not None else None,
         corner_hz=_value(corner, "Hz", "--corner") if corner is not None else None,
         vcc_text=vcc)


_SEARCH_OPTIONS = (  # (field, annotation, option): every timing search's options, in help order
    ("max_parts", int, typer.Option(2, "--max-parts", parser=whole("--max-parts", 1, 3), metavar="N", help=_COMMON_HELP["max_parts"])),
    ("top", int, typer.Option(10, "--top", parser=whole("--top", 1, MAX_TOP), metavar="K", help=_COMMON_HELP["top"])),
    ("boards", int, typer.Option(1, "--boards", parser=whole("--boards", 1, MAX_BOARDS), metavar="B", help=_COMMON_HELP["boards"])),
    ("accept", str, typer.Option("5%", "--accept", metavar="PCT", help=_COMMON_HELP["accept"])),
    ("distribution", DistributionChoice, typer.Option(DistributionChoice.uniform, "--distribution", help=_COMMON_HELP["distribution"])),
    ("seed", int, typer.Option(0, "--seed", parser=whole("--seed", 0, MAX_SEED), metavar="N", help=_COMMON_HELP["seed"])),
    ("samples", int, typer.Option(10_000, "--samples", parser=whole("--samples", 1, MAX_SAMPLES), metavar="N", help=_COMMON_HELP["samples"])),
    ("all_networks", bool, typer.Option(False, "--all-networks", help=_COMMON_HELP["all_networks"])),
    ("trim", bool, typer.Option(False, "--trim", help=_COMMON_HELP["trim"])),
    ("as_json", bool, typer.Option(False, "--json", help=_COMMON_HELP["json"])),
    ("explain", bool, typer.Option(False, "--explain", help=_COMMON_HELP["explain"])),
)


def _search_values(given: dict) -> dict:
    """The shared search options out of a command's ``**`` parameters (the rest stay)."""
    return {name: given.pop(name) for name, _, _ in _SEARCH_OPTIONS}


def _with_search_options(fn):
    """Give a command the options every timing search shares (``_SEARCH_OPTIONS``) after its own,
    in place of its ``**`` parameter, which receives them; typer reads the signature."""
    sig = inspect.signature(fn)
    own = [p for p in sig.parameters.values() if p.kind is not inspect.Parameter.VAR_KEYWORD]
    shared = [inspect.Parameter(name, inspect.Parameter.KEYWORD_ONLY, default=option, annotation=annotation)
              for name, annotation, option in _SEARCH_OPTIONS]
    fn.__signature__ = sig.replace(parameters=own + shared)
    return fn


def register(find_app: typer.Typer) -> None:
    """Attach this module's commands to the find group (astable with every circuit kind's own
    options added from the registry)."""
    find_app.command("astable")(handles_errors(_with_circuit_options(_with_search_options(astable))))
    find_app.command("monostable")(handles_errors(_with_search_options(monostable)))
    find_app.command("rc")(handles_errors(_with_search_options(rc)))
