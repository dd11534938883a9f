"""One compiled signature of the ensemble kernel for every caller.

The ensemble (float32 series, several blocks), its tornado (float64 series,
one block) and a one-draw ensemble (``--draws 1``) pass run_draws the same
argument types, so numba compiles it once (numba documents one compiled
specialisation per distinct tuple of argument types in a dispatcher's
``signatures``). Each run here goes through
:func:`prepkit.uncertainty.run.run_ensemble`, the path of the CLI. Runs in a
child process so that no other test's calls are counted. Source of the check:
numba documentation, "Dispatcher objects: signatures"; the rule of one
signature per kernel is the project's (issue 11).
"""

from __future__ import annotations

import subprocess
import sys
import textwrap

import pytest

pytestmark = pytest.mark.slow

CHILD = textwrap.dedent(
    """
    import sys
    sys.path.insert(0, "tests")
    from factories import banded_plan
    from prepkit.simulation.kernels import run_draws
    from prepkit.uncertainty.run import run_ensemble

    plan = banded_plan(4, horizon=40)
    scenario = plan.scenarios[0].name
    run_ensemble(plan, scenario, draws=24, blocks=3)   # float32, several blocks, with tornado
    run_ensemble(plan, scenario, draws=1)              # --draws 1
    run_ensemble(plan, scenario, False, draws=5, blocks=1)
    print(len(run_draws.signatures))
    """
)


def test_one_signature_after_ensemble_tornado_and_one_draw() -> None:
    found = subprocess.run(
        [sys.executable, "-c", CHILD], capture_output=True, text=True, check=True, timeout=600
    )
    assert found.stdout.strip().splitlines()[-1] == "1", found.stdout + found.stderr
