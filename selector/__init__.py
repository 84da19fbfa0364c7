"""selector: choose timing networks for 555 and RC circuits from the parts a shop has in stock."""

__version__ = "0.1.0"
