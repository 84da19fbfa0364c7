"""render layer of selector (see DEVELOPERS.md)."""
