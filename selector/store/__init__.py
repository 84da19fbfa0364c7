"""store layer of selector (see DEVELOPERS.md)."""
