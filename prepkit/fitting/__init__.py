"""Fitting to local observed data: the observations, priors, likelihood, sampler and checks.

:func:`prepkit.fitting.fit.fit_plan` is the entry point. The pipeline does not
call it yet: projections that start from the posterior and the pack's page
on the local figures are the next step of this stage.

The stage between the ensemble and the pack. Its statistical core works on
any vectorised simulator that maps parameter sets to expected daily
admissions, so the same code fits the compiled model (through the batch
evaluation entry point) and the simple simulators of the tests:

* :mod:`~prepkit.fitting.observations` - the observed rows as model days and
  counts, and the rule on the fewest points worth fitting;
* :mod:`~prepkit.fitting.priors` - priors from the workbook's Low/Central/High
  ranges (beta-PERT), log-uniform sizes, the dispersion prior;
* :mod:`~prepkit.fitting.likelihood` - the negative binomial count likelihood
  of daily or weekly admissions;
* :mod:`~prepkit.fitting.sampler` - the posterior, sampled with emcee's
  affine-invariant ensemble sampler;
* :mod:`~prepkit.fitting.diagnostics` - convergence (split R-hat, effective
  sample size, acceptance) and the posterior-predictive check.
"""
