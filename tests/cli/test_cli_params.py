"""selector.cli._params converts option values without pydantic where the result is certain. Checked
against typer's own conversion (the reference: the library's pydantic path, built here the way
typer builds it) for every parameter of every command: the same value, or the same refusal with
the same words."""

from __future__ import annotations


import pytest
import typer
from hypothesis import given, settings
from hypothesis import strategies as st

from conftest import SAMPLE, modules_after_commands, run_cli

typer_coercion = pytest.importorskip("typer._coercion")

from selector.cli._params import PlainParam  # noqa: E402  (needs the typer internals above)
from selector.cli.app import app  # noqa: E402


def _params():
    root = typer.main.get_command(app)
    found = []

    def walk(cmd, path):
        ctx = typer.Context(cmd)
        for p in cmd.params:
            found.append((f"{path} {p.name}".strip(), p, ctx))
        for name, sub in getattr(cmd, "commands", {}).items():
            walk(sub, f"{path} {name}")

    walk(root, "")
    return found


PARAMS = _params()

# Values a user could type, the defaults our options have, and the awkward ones.
EDGES = ["", " ", "0", "-0", "1", "-1", "2", "10", "007", "+3", " 4", "5 ", "1_000", "1.0", "1.5", "1e3",
         "abc", "nan", "inf", "99999999999999999999", "123456789012345678", "1234567890123456789",
         "٣", "resistor", "Resistor", "RESISTOR", "capacitor", "cmos", "diode", "output-fed", "output_fed",
         "normal", "uniform", "csv", "json", "CSV", "9V", "5%", "4k7", "-", "--", None, 0, 1, 10, 10_000, 2.5,
         True, False]


def _outcome(runtime, value, param, ctx):
    try:
        return ("value", runtime._coerce_value(value, param=param, ctx=ctx))
    except typer._click.exceptions.BadParameter as exc:
        return ("refused", exc.format_message())
    except typer.Exit as exc:  # our own whole-number parsers print one usage line and exit 2
        return ("exit", exc.exit_code)


def _check(value):
    for name, param, ctx in PARAMS:
        desc = param.type_descriptor
        if desc.file_annotation is not None:
            continue
        ours = PlainParam(parameter_info=desc.parameter_info, annotation=desc.annotation, descriptor=desc)
        reference = typer_coercion.build_runtime_param(desc)
        got, want = _outcome(ours, value, param, ctx), _outcome(reference, value, param, ctx)
        assert got == want and type(got[1]) is type(want[1]), (name, value, got, want)


def test_every_command_parameter_uses_the_direct_conversion():
    root = typer.main.get_command(app)
    ctx = typer.Context(root)
    assert all(isinstance(p._runtime_param, PlainParam) for _, p, _ in PARAMS)
    assert isinstance(root.get_help_option(ctx)._runtime_param, PlainParam)
    assert len(PARAMS) > 50  # the whole tree was walked


@pytest.mark.parametrize("value", EDGES, ids=repr)
def test_same_result_as_typer_for_edge_values(value):
    _check(value)


@settings(max_examples=150, deadline=None)
@given(st.one_of(st.text(max_size=12), st.from_regex(r"-?[0-9]{1,22}", fullmatch=True),
                 st.integers(), st.sampled_from(["standard", "bipolar", "capacitor", "normal", "csv"])))
def test_same_result_as_typer_for_any_text(value):
    _check(value)


def test_a_timing_search_with_json_does_not_import_pydantic(tmp_path):
    # In a fresh interpreter: whether the command loads pydantic (the reason this module exists);
    # then an unknown choice, which goes to typer's own conversion: the negative control.
    db = tmp_path / "s.db"
    assert run_cli("stock", "import", str(SAMPLE), db=db).returncode == 0
    search = ("find", "astable", "--freq", "1234", "--duty", "0.62")
    assert modules_after_commands(db, [search + ("--json",), search + ("--distribution", "bogus")],
                                  ["pydantic"]) == [(0, [False]), (2, [True])]
