"""Forward modelling for tests and the demo: depth models to zero-offset sections with every multiple.

- ``earth``: rock units, overprints (hydrate base, diagenetic front, gas-water contact), Gardner density.
- ``recursion``: the equal-time layered-earth response with a free surface (Goupillaud 1961).
- ``wavelets``: Ricker and Ormsby wavelets, seeded band-limited noise.
- ``section``: ``model_section(earth, ...) -> ModelledSection``.
- ``shapes``: anticline, dipping surface and canyon depth profiles.
- ``segy_writer``: SEG-Y rev 1 lines and volumes, pick-file CSV, written atomically.
- ``grid``: a map-view earth under a grid of crossing 2-D lines and small volumes, with planted
  line statics and mis-picks, and the project file that lists them.
- ``demo``: the invented Ondravel Trough line with planted picking mistakes.
"""
