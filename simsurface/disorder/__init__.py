"""Disorder of lattice wire models: Anderson, Gaussian-correlated puddles, roughness, vacancies.

Describe the disorder with :class:`DisorderParameters` (physical units), draw a realization for a model
with :func:`realize` (reproducible from the scenario seed and the realization index alone) and pass
``realization.chain_kwargs(flux)`` to the model's ``chain``.
"""

from .fields import gaussian_correlated_field, gaussian_covariance, uniform_box
from .layout import SiteLayout, layout_of
from .realization import STREAMS, DisorderParameters, Realization, check_parameters, realize, stream

__all__ = ["DisorderParameters", "Realization", "SiteLayout", "STREAMS", "check_parameters",
           "gaussian_correlated_field", "gaussian_covariance", "layout_of", "realize", "stream", "uniform_box"]
