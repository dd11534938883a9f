"""Where every number lives in the flat state, parameter and intervention arrays.

Equations in words
------------------
This module holds no equations. It fixes the order of the compartments in
the state vector and of the parameters in the flat parameter vector, so that
the compiled kernels (:mod:`prepkit.simulation.kernels`), the next-generation
matrix (:mod:`prepkit.simulation.transmissibility`) and the result tables all
read the same numbers.

State vector
    Blocks in the order of :data:`STATE_BLOCKS`. A block with ``q`` stages
    holds ``q * B`` numbers (``B`` = number of age bands); stage ``s`` of
    band ``i`` sits at ``offset + s * B + i``. Blocks ``S`` .. ``D`` are
    people (their sum is the population); the remaining blocks are
    cumulative counters that only ever grow.

Parameter vector
    ``N_BAND_FIELDS`` per-band fields (field ``f`` of band ``i`` at
    ``f * B + i``), then ``N_SCALARS`` scalars, then the four baseline
    contact matrices by setting (home, school, work, community), each
    ``B * B`` in row-major order.

Daily vector
    What changes at day boundaries: the transmission matrix already
    multiplied by beta, susceptibility, contact multipliers and divided by
    the band population (``B * B``), the isolation multiplier of people
    waiting for admission (``B``), the per-capita dosing rate of
    susceptibles (``B``) and the isolation multiplier of symptomatic people
    who stay at home (1).

Intervention table
    One row per intervention, columns ``IT_*`` below.

Note for maintainers: the kernels are compiled with ``numba`` and cached
(``cache=True``); the integer constants below are frozen into the cached
machine code, and numba only notices changes to the kernels' own source
files. This module is one of :data:`prepkit.simulation.kernels.COMPILED`:
after changing it, update :data:`~prepkit.simulation.kernels.KERNEL_SOURCES`
in each of them (tests/simulation/test_kernel_sources.py gives the value).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property
from types import MappingProxyType

import numpy as np
from numpy.typing import NDArray

from prepkit.plan import SETTINGS

STATE_BLOCKS: tuple[str, ...] = (
    "S",  # susceptible
    "V0",  # dosed, not yet protected
    "V",  # protected (leaky)
    "E",  # latent, infected while unprotected (latent stages)
    "EV",  # latent, infected while protected (latent stages)
    "A",  # asymptomatic, infectious (infectious stages)
    "Y",  # symptomatic, will not be admitted (infectious stages)
    "P",  # symptomatic, waiting for admission (admission delay stages)
    "W",  # in a ward bed (ward stages)
    "C",  # in an ICU bed (ICU stages)
    "R",  # recovered or discharged, immune
    "D",  # died (also the cumulative deaths counter)
    "cum_infections",
    "cum_onsets",
    "cum_admissions",
    "cum_icu_admissions",
    "cum_doses",
    "ward_bed_days",
    "icu_bed_days",
)
"""Names of the blocks of the state vector, in storage order."""

(
    BLK_S,
    BLK_V0,
    BLK_V,
    BLK_E,
    BLK_EV,
    BLK_A,
    BLK_Y,
    BLK_P,
    BLK_W,
    BLK_C,
    BLK_R,
    BLK_D,
    BLK_CUM_INF,
    BLK_CUM_ONSET,
    BLK_CUM_ADM,
    BLK_CUM_ICU,
    BLK_CUM_DOSE,
    BLK_WARD_DAYS,
    BLK_ICU_DAYS,
) = range(len(STATE_BLOCKS))
N_BLOCKS = len(STATE_BLOCKS)
N_PEOPLE_BLOCKS = BLK_D + 1
"""Blocks ``S`` .. ``D`` hold people; the rest are counters."""

INFECTED_BLOCKS: tuple[int, ...] = (BLK_E, BLK_EV, BLK_A, BLK_Y, BLK_P)
"""Blocks of the infected subsystem used by the next-generation matrix."""

# integer layout array
LAY_BANDS = 0
LAY_LATENT = 1
LAY_INFECTIOUS = 2
LAY_WAIT = 3
LAY_WARD = 4
LAY_ICU = 5
LAY_OFFSET = 6
"""``lay[LAY_OFFSET + b]`` is the offset of block ``b``; the last entry the state size."""
LAY_SIZE = LAY_OFFSET + N_BLOCKS + 1

# per-band parameter fields
(
    P_POP,  # band population at day 0 [persons]
    P_SUSCEPTIBILITY,  # relative susceptibility [dimensionless]
    P_SYMPTOMATIC,  # symptomatic share of infections [fraction]
    P_ADMIT,  # admitted share of unprotected infections [fraction]
    P_ADMIT_PROTECTED,  # admitted share of protected infections [fraction]
    P_ICU,  # share of admissions going to ICU [fraction]
    P_WARD_FATALITY,  # share of ward stays ending in death [fraction]
    P_ICU_FATALITY,  # share of ICU stays ending in death [fraction]
    P_WAIT_RATE,  # stage rate of the onset-to-admission delay [1/day]
    P_WARD_RATE,  # stage rate of the ward stay [1/day]
    P_ICU_RATE,  # stage rate of the ICU stay [1/day]
) = range(11)
N_BAND_FIELDS = 11

# scalar parameters
(
    S_LATENT_RATE,  # latent stage rate [1/day]
    S_INFECTIOUS_RATE,  # infectious stage rate [1/day]
    S_RHO,  # asymptomatic relative infectiousness [fraction]
    S_VE_INFECTION,  # vaccine efficacy against infection [fraction]
    S_PROTECT_RATE,  # 1 / days to protection [1/day]
    S_DOSE_TO_WAITING,  # 1 if doses pass through V0, 0 if they protect at once
    S_SEASON_AMPLITUDE,  # [fraction]
    S_SEASON_PEAK_DAY,  # model day of the seasonal peak [days]
    S_IMPORTS,  # importations [persons/day]
    S_TOTAL_POP,  # [persons]
    S_BETA,  # transmission scale [1/contact]
    S_GROWTH_BOUND,  # largest growth rate of infections possible in the run [1/day]
    S_GROWTH_STEP,  # largest (growth rate x step) that keeps the rise accurate [dimensionless]
) = range(13)
N_SCALARS = 13

UINT = np.uint64
"""Index type of the hot loops: numba tests signed indices for wrap-around, unsigned ones not."""


N_SETTINGS = len(SETTINGS)
SETTING_INDEX: Mapping[str, int] = MappingProxyType({name: i for i, name in enumerate(SETTINGS)})

# intervention table columns
IT_KIND = 0
IT_START_KIND = 1
IT_START_DAY = 2
IT_START_LEVEL = 3
IT_END_KIND = 4
IT_END_DAY = 5
IT_DURATION = 6
IT_RELEASE_LEVEL = 7
IT_MULTIPLIER = 8  # 4 columns, one per setting: 1 - compliance * (1 - kept)
IT_SCHOOL_CLOSURE = IT_MULTIPLIER + N_SETTINGS  # compliance * (1 - kept at school)
IT_DOSES = IT_SCHOOL_CLOSURE + 1  # doses per day
IT_CEILING = IT_DOSES + 1  # uptake ceiling x compliance [fraction]
IT_ISO_SYMPTOMATIC = IT_CEILING + 1  # infectiousness multiplier of Y
IT_ISO_WAITING = IT_ISO_SYMPTOMATIC + 1  # B columns: multiplier of P by band
IT_FIXED_COLUMNS = IT_ISO_WAITING

KIND_CONTACTS, KIND_VACCINATION, KIND_ISOLATION = 0, 1, 2
START_DATE, START_WARD, START_ICU, START_ADMISSIONS = 0, 1, 2, 3
END_HORIZON, END_DATE, END_DURATION, END_RELEASE = 0, 1, 2, 3
STATUS_WAITING, STATUS_ACTIVE, STATUS_FINISHED = 0, 1, 2

KIND_CODES: Mapping[str, int] = MappingProxyType({
    "contacts": KIND_CONTACTS,
    "vaccination": KIND_VACCINATION,
    "isolation": KIND_ISOLATION,
})
START_CODES: Mapping[str, int] = MappingProxyType({
    "date": START_DATE,
    "ward_occupancy": START_WARD,
    "icu_occupancy": START_ICU,
    "admissions": START_ADMISSIONS,
})
END_CODES: Mapping[str, int] = MappingProxyType({
    "horizon": END_HORIZON,
    "date": END_DATE,
    "duration": END_DURATION,
    "release": END_RELEASE,
})

# capacity array used by triggers
CAP_CATCHMENT, CAP_WARD_AVAILABLE, CAP_ICU_AVAILABLE = 0, 1, 2
N_CAP = 3


def scalar_offset(bands: int) -> int:
    """Index of the first scalar in the parameter vector."""
    return N_BAND_FIELDS * bands


def matrix_offset(bands: int) -> int:
    """Index of the first baseline contact matrix in the parameter vector."""
    return N_BAND_FIELDS * bands + N_SCALARS


def parameter_size(bands: int) -> int:
    """Length of the parameter vector."""
    return matrix_offset(bands) + N_SETTINGS * bands * bands


def daily_size(bands: int) -> int:
    """Length of the daily vector."""
    return bands * bands + 2 * bands + 1


@dataclass(frozen=True, kw_only=True)
class StateLayout:
    """Stage counts and block offsets of the state vector.

    Attributes
    ----------
    bands : int
        Number of age bands.
    latent_stages, infectious_stages, wait_stages, ward_stages, icu_stages : int
        Erlang stage counts of the latent period, the infectious period, the
        onset-to-admission delay and the ward and ICU stays.
    """

    bands: int
    latent_stages: int
    infectious_stages: int
    wait_stages: int
    ward_stages: int
    icu_stages: int

    def stages(self, block: int) -> int:
        """Number of stages of a block."""
        return {
            BLK_E: self.latent_stages,
            BLK_EV: self.latent_stages,
            BLK_A: self.infectious_stages,
            BLK_Y: self.infectious_stages,
            BLK_P: self.wait_stages,
            BLK_W: self.ward_stages,
            BLK_C: self.icu_stages,
        }.get(block, 1)

    @cached_property
    def offsets(self) -> tuple[int, ...]:
        """Offset of every block, then the total size (computed once per layout)."""
        out = [0]
        for block in range(N_BLOCKS):
            out.append(out[-1] + self.stages(block) * self.bands)
        return tuple(out)

    @property
    def size(self) -> int:
        """Length of the state vector."""
        return self.offsets[-1]

    @property
    def people_size(self) -> int:
        """Number of leading entries that hold people (not counters)."""
        return self.offsets[N_PEOPLE_BLOCKS]

    def block(self, block: int) -> slice:
        """Slice of a whole block (all stages, all bands)."""
        start = self.offsets[block]
        return slice(start, start + self.stages(block) * self.bands)

    def stage(self, block: int, stage: int = 0) -> slice:
        """Slice of one stage of a block (all bands)."""
        start = self.offsets[block] + stage * self.bands
        return slice(start, start + self.bands)

    def index(self, block: int, stage: int, band: int) -> int:
        """Index of one number."""
        return self.offsets[block] + stage * self.bands + band

    def block_total(self, states: NDArray[np.float64], block: int) -> NDArray[np.float64]:
        """Sum over stages of a block, per band, for states shaped (..., size)."""
        part = states[..., self.block(block)]
        shaped = part.reshape(part.shape[:-1] + (self.stages(block), self.bands))
        return np.asarray(shaped.sum(axis=-2), dtype=np.float64)

    def as_array(self) -> NDArray[np.int64]:
        """The integer layout array the kernels read."""
        head = [
            self.bands,
            self.latent_stages,
            self.infectious_stages,
            self.wait_stages,
            self.ward_stages,
            self.icu_stages,
        ]
        return np.array(head + list(self.offsets), dtype=np.int64)
