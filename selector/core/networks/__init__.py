"""Series/parallel networks of stock parts: the index of every network the stock allows
(``index``), its 3-part meet-in-the-middle search (``nearest``) and the one table of network
shapes (``shapes``). The public names of the index are re-exported here."""

from selector.core.networks.index import (  # noqa: F401
    SHAPES, Network, NetworkIndex, Structure, adds, build_index, nearest_networks,
)

__all__ = ["SHAPES", "Network", "NetworkIndex", "Structure", "adds", "build_index", "nearest_networks"]
