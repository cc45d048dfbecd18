"""Measured magnetotransport: import, symmetrization, background, spectrum, period and enclosed area,
coherence length from a temperature series, theory overlay, and synthetic demo data.

Modules: :mod:`.io` (delimited text, manifests), :mod:`.process` (symmetrization, background),
:mod:`.spectrum` (Lomb–Scargle / FFT, peak, period fit and bootstrap), :mod:`.analysis` (one curve,
several curves), :mod:`.temperature` (L_phi(T)), :mod:`.overlay` (theory over data), :mod:`.report`
(analysis.json, CSV and plots), :mod:`.synthetic` (invented data from simsurface's models).

For scripts: ``analyze_files(paths, AnalysisOptions(...))`` returns the ``analysis.json`` document;
``synthetic.resistance_from_theory_ohm`` turns a theory curve into synthetic measured data.
"""

from .analysis import AnalysisOptions
from .report import analyze_files

__all__ = ["AnalysisOptions", "analyze_files"]
