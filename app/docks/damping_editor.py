"""Damping editor: the model's damping model (on top of any dashpots), shown in the Properties
panel when nothing is selected.

None; one modal ratio for every mode with optional per-mode overrides (``2: 3 %, 4: 0.02``); or
Rayleigh ``C = alpha M + beta K`` typed directly or fitted to two frequencies and ratios with
``solver.rayleigh_coefficients`` (Chopra, Dynamics of Structures, 11.4). Each change is one undo
entry through :meth:`Document.set_top`; an entry that cannot be read or that the model refuses is
shown in place with the reason (red frame, text beneath) and the model is left as it was, as the
property fields do.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QSignalBlocker, Signal
from PySide6.QtWidgets import (QComboBox, QFormLayout, QLabel, QLineEdit, QPushButton,
                               QVBoxLayout, QWidget)

from solver.errors import ModelError
from solver.model import Damping

from app.docks.field_error import InPlaceError

MODELS = (("none", "none (dashpots only)"), ("modal", "modal ratio"),
          ("rayleigh", "Rayleigh (α M + β K)"))


def parse_ratio(text: str) -> float:
    """A damping ratio from ``0.05``, ``5 %`` or ``5%``; raises ModelError naming the problem."""
    s = text.strip().replace(",", ".")
    pct = s.endswith("%")
    if pct:
        s = s[:-1].strip()
    try:
        v = float(s)
    except ValueError:
        raise ModelError(f"cannot read {text!r} as a damping ratio; try 0.05 or 5 %") from None
    if not math.isfinite(v):
        raise ModelError(f"damping ratio must be a finite number, got {text!r}")
    return v / 100.0 if pct else v


def parse_number(text: str, what: str) -> float:
    try:
        v = float(text.strip().replace(",", "."))
    except ValueError:
        raise ModelError(f"cannot read {text!r} as {what}") from None
    if not math.isfinite(v):
        raise ModelError(f"{what} must be a finite number, got {text!r}")
    return v


def parse_mode_ratios(text: str) -> tuple[tuple[int, float], ...]:
    """``"2: 3 %, 4: 0.02"`` -> ((2, 0.03), (4, 0.02)); empty text gives no overrides."""
    pairs = []
    for part in filter(None, (p.strip() for p in text.replace(";", ",").split(","))):
        if ":" not in part:
            raise ModelError(f"per-mode ratio {part!r}: write mode: ratio, e.g. 2: 3 %")
        n, r = part.split(":", 1)
        try:
            mode = int(n.strip())
        except ValueError:
            raise ModelError(f"per-mode ratio {part!r}: the mode number must be a whole"
                             " number") from None
        pairs.append((mode, parse_ratio(r)))
    return tuple(pairs)


def format_ratio(v: float) -> str:
    return f"{v * 100:.4g} %"


class _Entry(InPlaceError, QWidget):
    """A line edit with its refusal reason beneath (same look as a property field)."""

    def __init__(self, name: str, tip: str, placeholder: str = "", parent=None):
        super().__init__(parent)
        self.edit = QLineEdit(self)
        self.edit.setObjectName(f"damping_{name}")
        self.edit.setToolTip(tip)
        self.edit.setPlaceholderText(placeholder)
        self._hint = tip
        self.error_label = QLabel(self)
        self.error_label.setWordWrap(True)
        self.error_label.hide()
        self.error = ""
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(1)
        lay.addWidget(self.edit)
        lay.addWidget(self.error_label)

    def set_text(self, text: str) -> None:
        with QSignalBlocker(self.edit):
            self.edit.setText(text)
        self.clear_error()



class DampingEditor(QWidget):
    """Edits ``document.model.damping`` through ``document.set_top``; never changes it directly."""

    status_message = Signal(str)

    def __init__(self, document, parent=None):
        super().__init__(parent)
        self.document = document
        form = QFormLayout(self)
        form.setContentsMargins(0, 0, 0, 0)
        self.form = form
        self.model_combo = QComboBox()
        self.model_combo.setObjectName("damping_model")
        for key, text in MODELS:
            self.model_combo.addItem(text, key)
        self.model_combo.setToolTip("Damping applied on top of the dashpots drawn on the canvas")
        self.model_combo.currentIndexChanged.connect(self._on_model_choice)
        form.addRow("Damping", self.model_combo)
        self.ratio = _Entry("ratio", "Fraction of critical damping for every mode: 0.05 or 5 %",
                            "e.g. 2 %")
        self.overrides = _Entry("mode_ratios", "Ratios for single modes, overriding the one"
                                " above: mode: ratio, ...", "e.g. 1: 1 %, 3: 0.04")
        self.alpha = _Entry("alpha", "Mass-proportional coefficient α in 1/s", "1/s")
        self.beta = _Entry("beta", "Stiffness-proportional coefficient β in s", "s")
        self.fit_f1 = _Entry("fit_f1", "First frequency of the fit, Hz", "f₁ Hz")
        self.fit_z1 = _Entry("fit_z1", "Damping ratio wanted at f₁", "ζ₁, e.g. 2 %")
        self.fit_f2 = _Entry("fit_f2", "Second frequency of the fit, Hz", "f₂ Hz")
        self.fit_z2 = _Entry("fit_z2", "Damping ratio wanted at f₂", "ζ₂, e.g. 2 %")
        self.fit_button = QPushButton("Fit α, β")
        self.fit_button.setObjectName("damping_fit")
        self.fit_button.setToolTip("Set α and β so the ratio is ζ₁ at f₁ and ζ₂ at f₂")
        self.fit_button.clicked.connect(self.fit_rayleigh)
        self.fit_error = _Entry("fit_error", "")
        self.fit_error.edit.hide()
        self._rows = {
            "modal": [("Ratio ζ", self.ratio), ("Per mode", self.overrides)],
            "rayleigh": [("α (1/s)", self.alpha), ("β (s)", self.beta),
                         ("Fit at f₁", self.fit_f1), ("ζ₁", self.fit_z1),
                         ("and f₂", self.fit_f2), ("ζ₂", self.fit_z2),
                         ("", self.fit_button), ("", self.fit_error)],
        }
        for rows in self._rows.values():
            for label, w in rows:
                form.addRow(label, w)
        self.ratio.edit.editingFinished.connect(self._on_ratio)
        self.overrides.edit.editingFinished.connect(self._on_overrides)
        self.alpha.edit.editingFinished.connect(lambda: self._on_coefficient("alpha"))
        self.beta.edit.editingFinished.connect(lambda: self._on_coefficient("beta"))
        document.model_changed.connect(self._on_model_change)
        self._on_model_change(document.model)

    # -- model -> widgets ---------------------------------------------------------------------
    def _on_model_change(self, model):
        d = model.damping
        with QSignalBlocker(self.model_combo):
            self.model_combo.setCurrentIndex(self.model_combo.findData(d.model))
        self.ratio.set_text(format_ratio(d.ratio))
        self.overrides.set_text(", ".join(f"{n}: {format_ratio(r)}" for n, r in d.mode_ratios))
        self.alpha.set_text(f"{d.alpha:.6g}")
        self.beta.set_text(f"{d.beta:.6g}")
        for key, rows in self._rows.items():
            for _label, w in rows:
                self._set_row_visible(w, key == d.model)
        self.fit_error.hide()

    def _set_row_visible(self, w, on):
        self.form.setRowVisible(w, on)

    # -- widgets -> document ------------------------------------------------------------------
    def _apply(self, damping_fn, entry: _Entry | None, text: str) -> bool:
        try:
            new = damping_fn(self.document.model.damping)
            changed = self.document.set_top(damping=new, text=text)
        except ModelError as exc:
            if entry is not None:
                entry.show_error(str(exc))
            self.status_message.emit(f"Refused: {exc}")
            return False
        if entry is not None:
            entry.clear_error()
        return changed

    def _on_model_choice(self, _i):
        key = self.model_combo.currentData()
        d = self.document.model.damping
        if key == "modal" and d.ratio == 0 and not d.mode_ratios:
            new = Damping(model="modal", ratio=0.02, alpha=d.alpha, beta=d.beta)
        else:
            new = Damping(model=key, ratio=d.ratio, alpha=d.alpha, beta=d.beta,
                          mode_ratios=d.mode_ratios)
        self._apply(lambda _d: new, None, f"Set damping to {key}")
        self._on_model_change(self.document.model)

    def _replace(self, **fields):
        def make(d):
            values = dict(model=d.model, ratio=d.ratio, alpha=d.alpha, beta=d.beta,
                          mode_ratios=d.mode_ratios)
            values.update(fields)
            return Damping(**values)
        return make

    def _on_ratio(self):
        e = self.ratio
        if not e.error and e.edit.text() == format_ratio(self.document.model.damping.ratio):
            return
        try:
            v = parse_ratio(e.edit.text())
        except ModelError as exc:
            e.show_error(str(exc))
            return
        self._apply(self._replace(ratio=v), e, f"Change damping ratio to {format_ratio(v)}")

    def set_ratio_text(self, text: str) -> None:
        """Type ``text`` into the ratio field and finish the entry (tests, scripting)."""
        self.ratio.edit.setText(text)
        self._on_ratio()

    def _on_overrides(self):
        e = self.overrides
        try:
            pairs = parse_mode_ratios(e.edit.text())
        except ModelError as exc:
            e.show_error(str(exc))
            return
        if not e.error and tuple(sorted(pairs)) == self.document.model.damping.mode_ratios:
            return
        self._apply(self._replace(mode_ratios=pairs), e, "Change per-mode damping ratios")

    def _on_coefficient(self, name):
        e = getattr(self, name)
        what = "α in 1/s" if name == "alpha" else "β in s"
        try:
            v = parse_number(e.edit.text(), what)
        except ModelError as exc:
            e.show_error(str(exc))
            return
        if not e.error and v == getattr(self.document.model.damping, name):
            return
        self._apply(self._replace(**{name: v}), e, f"Change Rayleigh {name}")

    def fit_rayleigh(self) -> bool:
        """Fit α and β to the two frequencies and ratios typed; one undo entry."""
        entries = ((self.fit_f1, "f₁ in Hz", parse_number), (self.fit_z1, None, parse_ratio),
                   (self.fit_f2, "f₂ in Hz", parse_number), (self.fit_z2, None, parse_ratio))
        vals = []
        for e, what, fn in entries:
            try:
                vals.append(fn(e.edit.text(), what) if what else fn(e.edit.text()))
                e.clear_error()
            except ModelError as exc:
                e.show_error(str(exc))
                return False
        try:
            # scipy: loaded on first use, after the window's first paint
            from solver.damping import rayleigh_coefficients

            alpha, beta = rayleigh_coefficients(*vals)
        except ModelError as exc:
            self.fit_error.show_error(str(exc))
            self.fit_error.show()
            return False
        self.fit_error.hide()
        return self._apply(self._replace(model="rayleigh", alpha=alpha, beta=beta), None,
                           f"Fit Rayleigh damping to {vals[0]:g} and {vals[2]:g} Hz")
