"""Physical and astronomical constants in SI units, as plain floats (the engine imports no units
library). Each is checked against ``astropy.constants`` / ``astropy.units`` in the tests.
"""

#: Speed of light in vacuum, m/s (exact, SI 2019).
c = 299_792_458.0
#: Planck constant, J s (exact, SI 2019).
h = 6.626_070_15e-34
#: Newtonian constant of gravitation, m^3 kg^-1 s^-2 (CODATA 2018).
G = 6.674_30e-11
#: Nominal solar mass, kg: the IAU 2015 Resolution B3 nominal GM_sun = 1.3271244e20 m^3 s^-2
#: divided by the CODATA 2018 G (the value astropy adopts).
MSUN = 1.988_409_870_698_051e30
#: Parsec, m (IAU 2015 Resolution B2: 1 pc = 648000/pi au, 1 au = 149 597 870 700 m).
PC = 3.085_677_581_491_367_3e16
#: Megaparsec, m.
MPC = 1e6 * PC
#: Julian year, s (IAU).
YEAR = 365.25 * 86400.0
#: Day, s.
DAY = 86400.0

__all__ = ["c", "h", "G", "MSUN", "PC", "MPC", "YEAR", "DAY"]
