"""The circuit model: values, parts, circuits, circuit files, structural checks, the catalogue.

It also holds the MNA stamp table (which unknowns each equation touches) and the
structural solvability checks made from it; nothing here does algebra, every other
layer builds on it.
"""
