"""The documented limits of the whole numbers that enter the tool (README "Accepted ranges").

One source for the CLI's option parsing, the services' re-checks and the store. Values, ratings
and other quantities with units have their ranges in :data:`selector.core.notation.RANGES`.
"""

from __future__ import annotations

#: Parts on one stock line, after every merge, adjustment and undo (and in one change).
MAX_QUANTITY = 10**9
#: Stock line, search and pull ids, option numbers and --limit: the database's 64-bit integer.
MAX_ID = 2**63 - 1
#: Boards in one search, BOM or pull: far beyond any bench, and boards x parts stays in 64 bits.
MAX_BOARDS = 10**6
#: Options shown by one search.
MAX_TOP = 1000
#: Monte Carlo builds per option (memory grows with it; the minimum is tolerance.MIN_SAMPLES).
MAX_SAMPLES = 10**6
#: Seed of the yield simulation: 0 or more, within 64 bits.
MAX_SEED = 2**63 - 1
