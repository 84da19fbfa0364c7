"""Option values without the cost of pydantic: typer converts every non-flag parameter through a
pydantic TypeAdapter, and importing pydantic and building the adapters is a sizeable part of a
short command's start-up. For the plain cases our commands use (text, whole numbers in range, a
choice from an Enum, an absent optional value) the result is certain, so we give it directly;
anything else (a bad number, an unknown choice, paths, floats) goes to typer's own conversion,
so values and error messages stay exactly typer's. tests/cli/test_cli_params.py checks both against
each other.

This leans on typer internals (``_TyperParameter._runtime_param``, ``typer._coercion``); if a
typer release moves them, ``install`` changes nothing and typer's own path is used throughout."""

from __future__ import annotations

import re
from enum import Enum
from typing import Any

import typer

_WHOLE = re.compile(r"-?(?:0|[1-9][0-9]{0,17})")  # plain decimal, well inside any int range

try:  # typer's runtime conversion contract (typer >= 0.20)
    from typer._coercion import RuntimeParam, build_runtime_param
    from typer._param_types import coerce_cli_choice
except ImportError:  # pragma: no cover - another typer: use its own conversion everywhere
    RuntimeParam = None  # type: ignore[assignment,misc]


def _plain_result(annotation: Any, info: Any, value: Any, ctx: Any) -> tuple[bool, Any]:
    """(True, result) when typer's conversion of ``value`` is certain to give ``result``."""
    if info.parser is not None:
        # typer calls the parser inside a pydantic validator: whatever it returns is the value, and
        # an exception other than ValueError/AssertionError (our parsers exit with one usage line)
        # passes through pydantic unchanged, so calling it here is the same.
        try:
            return True, info.parser(value)
        except (ValueError, AssertionError):  # pydantic would word these: let typer do it
            return False, None
    if annotation is str:
        return (True, value) if type(value) is str else (False, None)
    if annotation is int:
        if info.clamp:
            return False, None
        if type(value) is int:
            number = value
        elif type(value) is str and _WHOLE.fullmatch(value):
            number = int(value)
        else:
            return False, None
        if (info.min is not None and number < info.min) or (info.max is not None and number > info.max):
            return False, None
        return True, number
    if isinstance(annotation, type) and issubclass(annotation, Enum):
        try:
            return True, coerce_cli_choice(value, choices=tuple(annotation),
                                           case_sensitive=info.case_sensitive, ctx=ctx)
        except ValueError:  # typer words the refusal
            return False, None
    return False, None


if RuntimeParam is not None:
    from dataclasses import dataclass, field

    @dataclass(frozen=True)
    class PlainParam(RuntimeParam):
        """Certain cases directly; everything else through typer's own (pydantic) conversion."""

        descriptor: Any = None
        _fallback: list = field(default_factory=list, compare=False)

        def _coerce_value(self, value: Any, param: Any, ctx: Any) -> Any:
            done, result = _plain_result(self.annotation, self.parameter_info, value, ctx)
            if done:
                return result
            if not self._fallback:
                self._fallback.append(build_runtime_param(self.descriptor))
            return self._fallback[0]._coerce_value(value, param=param, ctx=ctx)


def _convert(param: Any) -> None:
    desc = getattr(param, "type_descriptor", None)
    if desc is None or getattr(param, "_runtime_param", False) is not None or desc.file_annotation is not None:
        return
    param._runtime_param = PlainParam(parameter_info=desc.parameter_info, annotation=desc.annotation,
                                      descriptor=desc)


def install(command: Any) -> None:
    """Give every parameter of ``command`` and its sub-commands the direct conversion (the
    ``--help`` option too, which click makes on first use), and plain help (``_help``)."""
    from selector.cli import _help

    _help.apply(command)
    for sub in getattr(command, "commands", {}).values():
        install(sub)
    if RuntimeParam is None:  # pragma: no cover
        return
    for param in getattr(command, "params", ()):
        _convert(param)
    make_help_option = getattr(command, "get_help_option", None)
    if make_help_option is not None:

        def get_help_option(ctx: Any, _make: Any = make_help_option) -> Any:
            option = _make(ctx)
            if option is not None:
                _convert(option)
            return option

        command.get_help_option = get_help_option


class Group(typer.core.TyperGroup):
    """The root group: installs the direct conversion and plain help on the whole command tree
    once it is built."""

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        install(self)
