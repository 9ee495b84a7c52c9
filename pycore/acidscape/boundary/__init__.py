"""Layer 4, boundary: scenario reading, result shaping, the JSON api, CLI and batch."""
