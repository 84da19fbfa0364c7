"""core layer of selector (see DEVELOPERS.md)."""
