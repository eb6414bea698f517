"""The exact engine: MNA stamps, fraction-free elimination on flint polynomials, rational functions."""
