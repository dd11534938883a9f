"""Priors of the fitted inputs: the workbook's Low/Central/High ranges and a dispersion prior.

* A workbook range becomes a beta-PERT density on ``[Low, High]`` with its
  mode at Central, the same distribution the uncertainty ensemble draws
  from (:mod:`prepkit.uncertainty.sampling`), so the fit starts from what the
  planner believed before the data.
* A size known only to an order of magnitude (the outbreak at day 0) gets a
  log-uniform density on ``[Low, High]``.
* The dispersion ``k`` of the counts is sampled as ``phi = 1 / sqrt(k)`` with
  a half-normal prior of scale 1 on ``phi``, which keeps the Poisson limit
  (``phi = 0``) inside the prior and lets the data decide how overdispersed
  they are.

References
----------
Malcolm D.G., Roseboom J.H., Clark C.E., Fazar W. (1959). Application of a
technique for research and development program evaluation. Operations
Research 7:646-669 (PERT).

Gelman A. (2006). Prior distributions for variance parameters in
hierarchical models. Bayesian Analysis 1:515-534 (half-normal and related
weakly informative priors on scale parameters).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np
from numpy.typing import NDArray
from scipy import stats

from prepkit.errors import ModelError
from prepkit.uncertainty.sampling import PERT_LAMBDA, pert_parameters

__all__ = ["Prior", "dispersion_prior"]

PriorKind = Literal["pert", "log_uniform", "half_normal"]


@dataclass(frozen=True, kw_only=True)
class Prior:
    """The prior of one fitted input.

    Attributes
    ----------
    name : str
        Key of the input (a workbook field name or a fit-only name).
    label, unit : str
        Plain-words name and unit, for the pack and the results workbook.
    kind : {"pert", "log_uniform", "half_normal"}
        Density family.
    low, mode, high : float
        Range and mode [unit]; for ``half_normal``, ``low = 0``, ``mode = 0``
        and ``high`` the scale.
    """

    name: str
    label: str
    unit: str
    kind: PriorKind
    low: float
    mode: float
    high: float

    def __post_init__(self) -> None:
        if self.kind != "half_normal" and not self.low < self.high:
            raise ModelError(f"{self.label}: a fitted input needs Low below High; "
                             f"found {self.low:g} and {self.high:g}")
        if self.kind == "log_uniform" and self.low <= 0.0:
            raise ModelError(f"{self.label}: a log-uniform range needs Low above 0")

    def log_density(self, x: NDArray[np.float64]) -> NDArray[np.float64]:
        """Log prior density at ``x`` [log density per unit]; minus infinity outside the range."""
        values = np.asarray(x, dtype=np.float64)
        if self.kind == "half_normal":
            out = stats.halfnorm.logpdf(values, scale=self.high)
        elif self.kind == "log_uniform":
            inside = (values >= self.low) & (values <= self.high)
            width = math.log(self.high / self.low)
            with np.errstate(divide="ignore", invalid="ignore"):
                out = np.where(inside, -np.log(values) - math.log(width), -np.inf)
        else:
            alpha, beta = pert_parameters(self.low, self.mode, self.high, PERT_LAMBDA)
            width = self.high - self.low
            out = stats.beta.logpdf((values - self.low) / width, alpha, beta) - math.log(width)
        return np.asarray(np.where(np.isnan(out), -np.inf, out), dtype=np.float64)

    def quantile(self, u: NDArray[np.float64]) -> NDArray[np.float64]:
        """Inverse distribution function at ``u`` in (0, 1) [unit], for the walkers' start."""
        q = np.asarray(u, dtype=np.float64)
        if self.kind == "half_normal":
            return np.asarray(stats.halfnorm.ppf(q, scale=self.high), dtype=np.float64)
        if self.kind == "log_uniform":
            return np.asarray(self.low * (self.high / self.low) ** q, dtype=np.float64)
        alpha, beta = pert_parameters(self.low, self.mode, self.high, PERT_LAMBDA)
        return np.asarray(
            self.low + (self.high - self.low) * stats.beta.ppf(q, alpha, beta), dtype=np.float64)


def dispersion_prior() -> Prior:
    """The prior of ``phi = 1 / sqrt(k)``: half-normal with scale 1 (Gelman 2006)."""
    return Prior(name="dispersion_phi", label="Overdispersion of the counts (1 / sqrt(k))",
                 unit="", kind="half_normal", low=0.0, mode=0.0, high=1.0)
