"""The numbers that change from draw to draw, one row per draw; one run is one row."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from numpy.typing import NDArray

from prepkit.plan.fit import CHANGE_MEASURE, FittedValues
from prepkit.simulation.inputs import ResolvedInputs


@dataclass(frozen=True, kw_only=True, eq=False)
class DrawValues:
    """The uncertain inputs of many draws, one row per draw.

    Field names and meanings are those of
    :class:`prepkit.simulation.inputs.ResolvedInputs`; one run is one row
    (:meth:`of_inputs`), so the single run and the ensemble build their
    parameters with the same code (:func:`prepkit.simulation.parameters.draw_parameters`).

    Attributes
    ----------
    transmissibility_value : ndarray, shape (draws,)
        Value of the plan's transmissibility measure [dimensionless, days or
        1/day].
    latent_period_days, infectious_period_days : ndarray, shape (draws,)
        Means [days].
    symptomatic_share, admitted_share, icu_share : ndarray, shape (draws, bands)
        Per band [fraction].
    ward_stay_days, icu_stay_days : ndarray, shape (draws, bands)
        Per band [days].
    efficacy_infection, efficacy_severe : ndarray, shape (draws,)
        Vaccine efficacies [fraction] (ignored by runs without vaccination).
    compliance : mapping of str to ndarray, shape (draws,)
        Per intervention name [fraction]; missing names use the central
        compliance.
    initial_infections : ndarray, shape (draws,), or None
        Infections at day 0 of each draw [persons]; None: the plan's
        (fitted draws carry their own, :func:`with_fitted`).
    """

    transmissibility_value: NDArray[np.float64]
    latent_period_days: NDArray[np.float64]
    infectious_period_days: NDArray[np.float64]
    symptomatic_share: NDArray[np.float64]
    admitted_share: NDArray[np.float64]
    icu_share: NDArray[np.float64]
    ward_stay_days: NDArray[np.float64]
    icu_stay_days: NDArray[np.float64]
    efficacy_infection: NDArray[np.float64]
    efficacy_severe: NDArray[np.float64]
    compliance: Mapping[str, NDArray[np.float64]] = field(default_factory=dict)
    initial_infections: NDArray[np.float64] | None = None

    @property
    def size(self) -> int:
        """Number of draws."""
        return int(self.transmissibility_value.shape[0])

    @classmethod
    def of_inputs(cls, inputs: ResolvedInputs) -> DrawValues:
        """One run's picked numbers as a single draw.

        Parameters
        ----------
        inputs : ResolvedInputs
            Numbers picked for the run.

        Returns
        -------
        DrawValues
            One row, the same numbers.
        """

        def row(values: float | tuple[float, ...]) -> NDArray[np.float64]:
            return np.array([values], dtype=np.float64)

        return cls(
            transmissibility_value=row(inputs.transmissibility_value),
            latent_period_days=row(inputs.latent_period_days),
            infectious_period_days=row(inputs.infectious_period_days),
            symptomatic_share=row(inputs.symptomatic_share),
            admitted_share=row(inputs.admitted_share),
            icu_share=row(inputs.icu_share),
            ward_stay_days=row(inputs.ward_stay_days),
            icu_stay_days=row(inputs.icu_stay_days),
            efficacy_infection=row(inputs.efficacy_infection),
            efficacy_severe=row(inputs.efficacy_severe),
            compliance={k: row(v) for k, v in inputs.compliance.items()},
        )

    def overrides(self, draw: int) -> dict[str, Any]:
        """One draw as overrides for :func:`prepkit.scenarios.runs.run_scenario`.

        Parameters
        ----------
        draw : int
            Draw index.

        Returns
        -------
        dict
            Field of :class:`~prepkit.simulation.inputs.ResolvedInputs` to value.
        """
        return {
            "transmissibility_value": float(self.transmissibility_value[draw]),
            "latent_period_days": float(self.latent_period_days[draw]),
            "infectious_period_days": float(self.infectious_period_days[draw]),
            "symptomatic_share": tuple(float(x) for x in self.symptomatic_share[draw]),
            "admitted_share": tuple(float(x) for x in self.admitted_share[draw]),
            "icu_share": tuple(float(x) for x in self.icu_share[draw]),
            "ward_stay_days": tuple(float(x) for x in self.ward_stay_days[draw]),
            "icu_stay_days": tuple(float(x) for x in self.icu_stay_days[draw]),
            "efficacy_infection": float(self.efficacy_infection[draw]),
            "efficacy_severe": float(self.efficacy_severe[draw]),
            "compliance": {k: float(v[draw]) for k, v in self.compliance.items()},
        }


def take_draws(values: DrawValues, rows: NDArray[np.int64]) -> DrawValues:
    """A subset of draws.

    Parameters
    ----------
    values : DrawValues
        The draws.
    rows : ndarray of int
        Draw indices to keep.

    Returns
    -------
    DrawValues
        The chosen draws, in the order of ``rows``.
    """
    return DrawValues(
        transmissibility_value=values.transmissibility_value[rows],
        latent_period_days=values.latent_period_days[rows],
        infectious_period_days=values.infectious_period_days[rows],
        symptomatic_share=values.symptomatic_share[rows],
        admitted_share=values.admitted_share[rows],
        icu_share=values.icu_share[rows],
        ward_stay_days=values.ward_stay_days[rows],
        icu_stay_days=values.icu_stay_days[rows],
        efficacy_infection=values.efficacy_infection[rows],
        efficacy_severe=values.efficacy_severe[rows],
        compliance={k: v[rows] for k, v in values.compliance.items()},
        initial_infections=(None if values.initial_infections is None
                            else values.initial_infections[rows]),
    )


def with_fitted(values: DrawValues, fitted: FittedValues) -> DrawValues:
    """Draws whose fitted inputs take the fitted values: the one rule of fit and projection.

    Row ``i`` of the draws takes row ``i mod rows`` of ``fitted`` (see
    :meth:`prepkit.plan.fit.FittedValues.cycled`). The transmissibility, the admitted
    shares and the infections at day 0 are replaced; the change of spread ``m`` becomes
    the compliance ``1 - m`` of the row :data:`prepkit.plan.fit.CHANGE_MEASURE`. Every
    other input keeps its drawn value. A fitted admitted share above the drawn
    symptomatic share is cut to it when the parameters are built, as in every run.

    Parameters
    ----------
    values : DrawValues
        The draws.
    fitted : FittedValues
        The fitted values.

    Returns
    -------
    DrawValues
        The same number of draws.
    """
    rows = fitted.cycled(values.size)
    compliance = dict(values.compliance)
    if rows.change_factor is not None:
        compliance[CHANGE_MEASURE] = 1.0 - rows.change_factor
    return replace(
        values,
        transmissibility_value=(values.transmissibility_value if rows.transmissibility is None
                                else rows.transmissibility),
        admitted_share=(values.admitted_share if rows.admitted_share is None
                        else rows.admitted_share),
        initial_infections=(values.initial_infections if rows.initial_infections is None
                            else rows.initial_infections),
        compliance=compliance,
    )
