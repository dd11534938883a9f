"""Admitted share of infections of protected (vaccinated) people, for one run or many draws.

A protected person is infected at ``(1 - VE_inf)`` times the rate of an
unprotected one and admitted at ``(1 - VE_sev)`` times the rate, so among
protected *infections* the admitted share is
``h_v = min(p, h (1 - VE_sev) / (1 - VE_inf))`` (``p`` the symptomatic share,
``h`` the admitted share, already cut to ``p``); 0 when ``VE_inf = 1``
(nobody protected is infected).

References
----------
Halloran M.E., Haber M., Longini I.M., Struchiner C.J. (1991). Direct and
indirect effects in vaccine efficacy and effectiveness. Am. J. Epidemiol.
133:323-331 (the leaky model of vaccine action).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray


def protected_admitted_share(
    symptomatic: ArrayLike, admitted: ArrayLike, ve_infection: ArrayLike, ve_severe: ArrayLike
) -> NDArray[np.float64]:
    """Admitted share of infections of protected people [fraction].

    Parameters
    ----------
    symptomatic, admitted : array, shape (bands,) or (draws, bands)
        Symptomatic share and admitted share (cut to the symptomatic share)
        of each band [fraction].
    ve_infection, ve_severe : float or array, shape (draws,)
        Vaccine efficacy against infection and against admission [fraction].

    Returns
    -------
    ndarray, shaped as ``admitted``
        ``min(p, h (1 - VE_sev) / (1 - VE_inf))``, 0 where ``VE_inf >= 1``.
    """
    p_sym = np.asarray(symptomatic, dtype=np.float64)
    h = np.asarray(admitted, dtype=np.float64)
    ve_inf = np.asarray(ve_infection, dtype=np.float64)[..., None]
    ve_sev = np.asarray(ve_severe, dtype=np.float64)[..., None]
    full = ve_inf >= 1.0
    keep = np.where(full, 0.5, 1.0 - ve_inf)  # any non-zero divisor where VE_inf = 1
    hv = np.minimum(p_sym, h * (1.0 - ve_sev) / keep)
    return np.asarray(np.where(full, 0.0, hv), dtype=np.float64)
