"""One call that gives views, the report and the command line everything about a model."""

from __future__ import annotations

from dataclasses import dataclass

from .errors import checked_arguments
from .assemble import System, assemble
from .metrics import EnergyResult, Sensitivity, energy_fractions, sensitivities
from .model import Model
from .modes import ModalResult, modes


@dataclass(frozen=True, eq=False)
class Analysis:
    """Modes of a model with their energy shares, sensitivities and all warnings."""

    model: Model
    system: System
    modal: ModalResult
    energy: EnergyResult
    sensitivity: Sensitivity
    warnings: tuple

    @property
    def n_modes(self) -> int:
        return self.modal.n_modes


@checked_arguments
def analyse(model: Model, count: int | None = None) -> Analysis:
    """Assemble, solve and post-process a model (see :func:`solver.modes` for ``count``)."""
    system = assemble(model)
    modal = modes(system, count=count)
    energy = energy_fractions(modal)
    sens = sensitivities(modal)
    warnings = list(modal.warnings)
    if modal.message:
        warnings.insert(0, modal.message)
    return Analysis(model=model, system=system, modal=modal, energy=energy, sensitivity=sens,
                    warnings=tuple(dict.fromkeys(warnings)))
