"""Numerics layer: the compiled stiff integrator for species balances.

Modules (one concern each)::

    linalg       dense LU with partial pivoting; sparse LU on the known pattern (numba)
    kinetics     mass-action right-hand side and analytic Jacobian on the mechanism arrays
    electrons    electron coefficient tables versus E/N and their interpolation
    rosenbrock   RODAS4 coefficients, one step, dense output
    bdf          variable-order BDF (NDF): constants, history differences, dense output
    controller   error norm and PI step-size control
    field        reduced-field and electron-density profiles and their restart segments
    integrate    the compiled step loop and the public entry point
    results      the result record, cost counters, status codes, failure exception
"""

from .electrons import ElectronTable
from .field import ElectronDensityProfile, FieldProfile
from .integrate import integrate
from .results import Counters, IntegrationError, KineticsResult

__all__ = ["Counters", "ElectronDensityProfile", "ElectronTable", "FieldProfile",
           "IntegrationError", "KineticsResult", "integrate"]
