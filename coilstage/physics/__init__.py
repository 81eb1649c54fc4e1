"""Physics: pure functions on SI floats (temperatures in °C), one law a function, each with its source.

Nothing here knows about drawings, tables or reports.
"""
