"""Generic numerics shared by every layer: the vectorised bracketed root finder. A leaf: it imports
nothing of letdown."""
