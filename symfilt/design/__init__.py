"""Design assist: sizing to a target, E-series, tolerance spread, op-amp drive and op-amp error."""
