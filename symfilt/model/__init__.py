"""The circuit model: values, parts, circuits, circuit files, structural checks, the catalogue.

Nothing here knows about equations; every other layer builds on it.
"""
