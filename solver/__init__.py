"""Springwright's solver: lumped spring-mass models, their modes and responses.

Pure numpy/scipy; no Qt. The public API (stable, used by scripts and the command line):

- :func:`load_model`, :func:`save_model` — the JSON model file (atomic save, schema-validated load)
- :func:`assemble` -> :class:`System` (``.M``, ``.K``, ``.C``, ``.dofs``)
- :func:`modes` -> :class:`ModalResult` (``.frequencies_hz``, ``.omegas``, ``.shapes``, ``.dofs``,
  ``.effective_mass``, ``.zero_modes``)
- :func:`energy_fractions`, :func:`sensitivities`, :func:`analyse`
- :func:`free_response`
- :func:`harmonic_response`, :func:`base_transmissibility`, :func:`find_peaks`
- :func:`retune` (:func:`retune_result` with the details), :func:`sweep`, :func:`rank_elements`, :func:`margin_check`
- :func:`margin_table` (every mode against every source, with separations) and
  :func:`interference` (order lines against natural frequencies, their crossing speeds)
- :class:`ModelError`, :class:`ModelFileError`
"""

from .analysis import Analysis, analyse
from .assemble import System, assemble
from .errors import ModelError, ModelFileError
from .io import dumps_model, load_model, model_from_dict, model_to_dict, save_model, schema
from .metrics import EnergyResult, Sensitivity, energy_fractions, sensitivities
from .model import (Anchor, Damper, Damping, Excitation, Initial, Mass, Model, Spring,
                    directions_for)
from .modes import ModalResult, ZeroMode, modes
from .response import FreeResponse, free_response
from .frequency import (Peak, base_transmissibility, find_peaks, harmonic_response,
                        isolation_efficiency, rms_over_band)
from .damping import DampedModes, damped_modes, rayleigh_coefficients
from .margins import Conflict, MarginResult, margin_check, source_bands
from .margin_table import MarginRow, MarginTable, margin_table
from .interference import Crossing, Interference, OrderLine, interference
from .tuning import (RetuneResult, SweepResult, limit_spectrum, rank_elements, reachable_range,
                     retune, retune_result, sweep, with_value)

__all__ = [
    "Analysis", "analyse", "System", "assemble", "ModelError", "ModelFileError", "dumps_model",
    "load_model", "model_from_dict", "model_to_dict", "save_model", "schema", "EnergyResult",
    "Sensitivity", "energy_fractions", "sensitivities", "Anchor", "Damper", "Damping",
    "Excitation", "Initial", "Mass", "Model", "Spring", "directions_for", "ModalResult",
    "ZeroMode", "modes", "FreeResponse", "free_response", "Peak", "base_transmissibility",
    "find_peaks", "harmonic_response", "isolation_efficiency", "rms_over_band", "Conflict",
    "MarginResult", "margin_check", "source_bands", "SweepResult", "rank_elements", "retune",
    "sweep", "with_value", "RetuneResult", "retune_result", "limit_spectrum", "reachable_range", "DampedModes", "damped_modes", "rayleigh_coefficients",
    "MarginRow", "MarginTable", "margin_table", "Crossing", "Interference", "OrderLine",
    "interference",
]
