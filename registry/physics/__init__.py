"""Pure physics functions: arrays in, arrays out, SI units inside.

Nothing here imports yaml, jinja2 or matplotlib.
"""
