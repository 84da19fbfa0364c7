"""The exact timing search: the engine that runs a circuit's kernel over the stock's networks
(``engine``) and the kernels themselves (``kernels``: the one-resistor and two-resistor passes).
The public names of the engine are re-exported here."""

from selector.core.search.engine import (  # noqa: F401
    ASTABLE_CONNECTIONS, Exclusions, FoundOption, Limits, SearchResult, Target, choose_connections,
    output_fed_best_error, resolve_limits, search_timing,
)

__all__ = ["ASTABLE_CONNECTIONS", "Exclusions", "FoundOption", "Limits", "SearchResult", "Target",
           "choose_connections", "output_fed_best_error", "resolve_limits", "search_timing"]
