"""Analysis of network functions: standard forms, cutoff, numbers, sensitivities, loading."""
