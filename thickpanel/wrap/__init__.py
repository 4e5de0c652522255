"""Wrapped-hub arrays: sheets that wrap round a polygonal hub (zero-thickness and thick constructions)."""
