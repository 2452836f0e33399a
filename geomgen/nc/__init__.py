"""NC programs from the plan: ISO 6983 drilling and pocketing programs, read back and checked.

`programs` (program.py) writes one program per web and face with new work; `check` (check.py) reads each
back with an independent G-code parser (pygcode), simulates it (simulate.py) and compares what it cuts
with the plan; `backplot` draws the toolpaths for the report.  Importing this package loads nothing
heavy: the modules are imported where they are used.
"""
