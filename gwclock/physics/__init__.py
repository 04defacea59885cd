"""The physics of one clock pair: link response, clock species, projection noise, the stationary
noises of the link, filter functions, and the pulse-sequence kinds.

Nothing here knows about files, missions or outputs: every function takes SI floats (or arrays)
and a :class:`~gwclock.physics.design.Design`.
"""

__all__: list[str] = []
