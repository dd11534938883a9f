"""Frozen copy of main's compiled kernel modules at caad1f3 (before issue 11).

Used by benchmarks/speed.py; only the imports between these modules were rewritten, so run
with benchmarks/ on sys.path.
"""
