"""SPICE netlists of an option and reading ngspice's measurements back (pure).
``netlist`` holds the records, the network wiring, the behavioural 555 and the measurement
parsing; ``build`` asks the option's circuit kind for its netlist, measurements and corners.
The public names are re-exported here."""

from selector.core.spice.netlist import *  # noqa: F401,F403
from selector.core.spice.netlist import (  # noqa: F401  (helpers the circuit modules use)
    _eng, _need, _net, _num, _tran, _wave_block,
)
from selector.core.spice.build import build_netlist, corner_circuits, reduce_measurements  # noqa: F401
