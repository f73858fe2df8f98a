"""Pure domain of plumebook: records, programs, leak lifecycle, estimates and units.

Nothing in this package opens a file, a database or a window, or reads the clock:
"today" is always a parameter.
"""
