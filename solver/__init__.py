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
- :func:`body_coupling` (rigid bodies on mounts: coupling, elastic centre) and
  :func:`referred_system` (a geared model's equivalent on one shaft)
- :func:`random_response`, :func:`shock_response`, :func:`shock_response_spectrum`,
  :func:`spectrum_response`, :func:`load_results` (random vibration, shock and design response
  spectra as base motion; the definitions :class:`Loads`, :class:`RandomVibration`,
  :class:`ShockPulse`, :class:`DesignSpectrum`)
- :class:`ModelError`, :class:`ModelFileError`
"""

import sys as _sys
import types as _types
from importlib import import_module as _import_module
from importlib.util import LazyLoader as _LazyLoader
from importlib.util import find_spec as _find_spec
from importlib.util import module_from_spec as _module_from_spec

# Submodules load on first use (PEP 562): ``import solver`` costs little (the window paints
# before scipy is loaded), and ``from solver import X`` or ``solver.X`` loads X's module then.
# Public name -> the submodule that defines it.
_EXPORTS = {name: module for module, names in {
    "analysis": ("Analysis", "analyse"),
    "assemble": ("System", "assemble"),
    "bodies": ("BodyCoupling", "ReferredSystem", "body_coupling", "referred_system"),
    "errors": ("ModelError", "ModelFileError"),
    "io": ("dumps_model", "load_model", "model_from_dict", "model_to_dict", "save_model", "schema"),
    "metrics": ("EnergyResult", "Sensitivity", "energy_fractions", "sensitivities"),
    "model": ("Anchor", "Damper", "Damping", "Excitation", "Gear", "Initial", "Mass", "Model",
              "Spring", "directions_for"),
    "modes": ("ModalResult", "ZeroMode", "modes"),
    "response": ("FreeResponse", "free_response"),
    "frequency": ("Peak", "base_transmissibility", "find_peaks", "harmonic_response",
                  "isolation_efficiency", "rms_over_band"),
    "damping": ("DampedModes", "damped_modes", "rayleigh_coefficients"),
    "margins": ("Conflict", "MarginResult", "margin_check", "source_bands"),
    "margin_table": ("MarginRow", "MarginTable", "margin_table"),
    "interference": ("Crossing", "Interference", "OrderLine", "interference"),
    "tuning": ("RetuneResult", "SweepResult", "limit_spectrum", "rank_elements",
               "reachable_range", "retune", "retune_result", "sweep", "with_value"),
    "load_cases": ("DesignSpectrum", "Loads", "RandomVibration", "ShockPulse"),
    "loads": ("LoadResults", "MilesCheck", "RandomResult", "SRS", "ShockResult", "SpectrumResult",
              "cqc_correlation", "load_results", "random_response", "shock_response",
              "shock_response_spectrum", "spectrum_response"),
}.items() for name in names}
# tolerance studies and tuned-absorber sizing (issue 15)
_EXPORTS.update({"Tolerance": "model", "ModeStudy": "study", "StudyResult": "study",
                 "tolerance_study": "study", "AbsorberDesign": "absorber",
                 "size_absorber": "absorber"})


class _Package(_types.ModuleType):
    """The package's module type: where a submodule has the name of the function it exports
    (``solver.modes``, ``solver.assemble``, ...), the package attribute stays the function when
    the import system binds the loaded submodule to it (the public API calls ``solver.modes(...)``;
    the module is ``sys.modules["solver.modes"]``)."""

    def __setattr__(self, name, value):
        if isinstance(value, _types.ModuleType) and _EXPORTS.get(name) == name:
            value = getattr(value, name)
        super().__setattr__(name, value)


def __getattr__(name):
    module = _EXPORTS.get(name)
    if module is not None:
        value = getattr(_import_module(f".{module}", __name__), name)
    elif _find_spec(f".{name}", __name__) is not None and not name.startswith("_"):
        value = _import_module(f".{name}", __name__)   # solver.io, solver.tuning, ...
    else:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))


def _registered_lazily(name: str) -> None:
    """Put submodule ``name`` in ``sys.modules`` now, executed on its first attribute access
    (``sys.modules["solver.modes"]`` is the modes module right after ``import solver``, as it
    was when the package imported everything at once)."""
    spec = _find_spec(f"{__name__}.{name}")
    spec.loader = _LazyLoader(spec.loader)
    module = _module_from_spec(spec)
    _sys.modules[spec.name] = module
    spec.loader.exec_module(module)


_sys.modules[__name__].__class__ = _Package
_registered_lazily("modes")

__all__ = [
    "Analysis", "analyse", "System", "assemble", "ModelError", "ModelFileError", "dumps_model",
    "load_model", "model_from_dict", "model_to_dict", "save_model", "schema", "EnergyResult",
    "Sensitivity", "energy_fractions", "sensitivities", "Anchor", "Damper", "Damping",
    "Excitation", "Gear", "Initial", "Mass", "Model", "Spring", "directions_for", "ModalResult",
    "ZeroMode", "modes", "FreeResponse", "free_response", "Peak", "base_transmissibility",
    "find_peaks", "harmonic_response", "isolation_efficiency", "rms_over_band", "Conflict",
    "MarginResult", "margin_check", "source_bands", "SweepResult", "rank_elements", "retune",
    "sweep", "with_value", "RetuneResult", "retune_result", "limit_spectrum", "reachable_range", "DampedModes", "damped_modes", "rayleigh_coefficients",
    "MarginRow", "MarginTable", "margin_table", "Crossing", "Interference", "OrderLine",
    "interference", "BodyCoupling", "ReferredSystem", "body_coupling", "referred_system",
    "DesignSpectrum", "Loads", "RandomVibration", "ShockPulse", "LoadResults", "MilesCheck",
    "RandomResult", "SRS", "ShockResult", "SpectrumResult", "cqc_correlation", "load_results",
    "random_response", "shock_response", "shock_response_spectrum", "spectrum_response",
]
__all__ += ["Tolerance", "ModeStudy", "StudyResult", "tolerance_study", "AbsorberDesign",
            "size_absorber"]
