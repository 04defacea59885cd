"""Exact SI defining constants (2019 redefinition), without importing a constants library."""

#: Speed of light in vacuum, m/s (exact).
c = 299_792_458.0
#: Planck constant, J s (exact).
h = 6.626_070_15e-34
