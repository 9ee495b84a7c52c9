"""Layer 1, data: the cited constants (CSV files here) and their loader."""
