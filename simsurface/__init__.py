"""simsurface: Aharonov–Bohm magnetoconductance of surface-conducting nanowires.

Models of topological-insulator and trivial surface states on nanowires, a Landauer transport engine
for quasi-one-dimensional systems, sweeps over flux, energy and disorder, and analysis of simulated and
measured magnetoconductance. Physical units throughout: nm, meV, K, T; flux in units of h/e.
"""

__version__ = "0.1.0"
