"""SPICE netlists of an option and reading ngspice's measurements back (pure; stdlib only).
``netlist`` holds the records, the network wiring, the behavioural 555 and the measurement
reading; the public names are re-exported here."""

from selector.core.spice.netlist import *  # noqa: F401,F403
from selector.core.spice.netlist import (  # noqa: F401  (underscored helpers some callers use)
    _eng, _num, _tran, _wave_block,
)
