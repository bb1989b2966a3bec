"""Pure physics functions: arrays in, arrays out, SI units inside.

Nothing here imports yaml, jinja2 or matplotlib. Modules, by domain noun:
wave (wavelength, resonant length, ground plane), wire (thin-wire method of moments),
impedance (wire antenna kinds, resonance, VSWR band), kinds (geometry parameters per kind),
elements and arrays (closed-form patterns), metrics and patterns (pattern_for_kind and its metrics),
mismatch, feeder (cable loss budget, coax from geometry), coupling (isolation), sweep (Touchstone
one-port sweeps, distance to reflection).
"""
