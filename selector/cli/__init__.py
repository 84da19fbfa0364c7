"""Typer commands: thin layers that parse options, call one service or core function, render."""
