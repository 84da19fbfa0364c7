"""services layer of selector (see DEVELOPERS.md)."""
