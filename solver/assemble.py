"""Mass, stiffness and damping matrices of a lumped model.

Each unlocked direction of each mass is a degree of freedom (DOF), named ``(mass_id, direction)``.
Massless nodes (``mass == 0``) are junctions: their DOFs carry no inertia, so they are condensed out
statically (Guyan condensation, exact for massless DOFs),

    K_red = K_mm - K_ms K_ss^+ K_sm,        x_s = -K_ss^+ K_sm x_m,

and their motion is recovered from that of the masses. The condensation is done on the
stiffness factor ``K = A^T A`` by orthogonal projection (solver/factor.py), which gives the same
K_red and x_s without the cancellation of the formula above when one spring is far stiffer than
the others. ``System.M``, ``.K``, ``.C`` and ``.dofs``
are the condensed matrices on the DOFs that carry mass; ``.M_full``, ``.K_full``, ``.C_full`` and
``.all_dofs`` keep every DOF, junctions included, for direct frequency-domain solves.

Planar springs act along their drawn line: with ``e`` the unit vector from end a to end b and ``n``
at right angles to it, the 2x2 stiffness between the ends' relative displacement and force is
``k e e^T + k_t n n^T`` (small displacements about the drawn layout). Dashpots act axially the same
way with ``c``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg
import scipy.sparse as sp

from . import factor
from .errors import ModelError, checked_arguments
from .model import Model
from .naming import named, quoted_id

#: Above this many DOFs the matrices are kept sparse (chosen with bench/solver_bench.py).
SPARSE_DOF_LIMIT = 600


@dataclass(frozen=True, eq=False)
class System:
    """Assembled matrices of a model.

    Attributes
    ----------
    M, K, C : (n, n) ndarray or scipy.sparse matrix
        Mass (kg or kg m^2), stiffness (N/m or N m/rad) and damping (N s/m) matrices on ``dofs``,
        after static condensation of massless junctions. ``M`` is diagonal and positive. ``C``
        is the whole viscous damping: the dashpots plus the model's damping (Rayleigh
        ``alpha M + beta K``, or for modal ratios ``M Phi diag(2 zeta_i w_i) Phi^T M`` over all
        modes), so that ``[[0, I], [-M^-1 K, -M^-1 C]]`` is the system's state matrix.
    C_dashpots : the dashpots' part of ``C`` alone.
    dofs : tuple of (mass_id, direction)
        The DOFs that carry mass, in the order of the matrices' rows.
    all_dofs : tuple of (mass_id, direction)
        Every free DOF, junctions included; ``recovery @ x`` maps a vector on ``dofs`` to them.
    recovery : (n_all, n) ndarray or sparse matrix
    M_full, K_full, C_full : matrices on ``all_dofs`` before condensation (M_full may be singular);
        ``C_full`` holds the dashpots only.
    sparse : bool
        True when the matrices are scipy.sparse (large models).
    warnings : tuple of str
        Things in the model that a user should know about (no effect, approximations).
    """

    model: Model
    M: object
    K: object
    C: object
    dofs: tuple
    all_dofs: tuple
    recovery: object
    M_full: object
    K_full: object
    C_full: object
    sparse: bool
    warnings: tuple = ()
    # per-spring geometry for energies and sensitivities: DOF indices into all_dofs of the
    # (end a, end b) components, -1 where the end is grounded or locked, and the unit axis.
    spring_dofs: np.ndarray = field(default=None, repr=False)
    spring_axis: np.ndarray = field(default=None, repr=False)
    mass_dofs: dict = field(default=None, repr=False)
    C_dashpots: object = field(default=None, repr=False)
    #: (n_all, n_loose) orthonormal directions of massless junctions held by no spring and no
    #: dashpot (K_full, C_full and M_full are all zero along them); empty when there are none.
    loose: np.ndarray = field(default=None, repr=False)
    #: (n_rows, n) sparse stiffness factor on ``dofs``: ``K = K_factor^T K_factor`` (one row per
    #: spring, or per condensed combination of springs; see solver/factor.py). It keeps what
    #: forming K loses to rounding (a soft spring beside a very stiff one).
    K_factor: object = field(default=None, repr=False)

    @property
    def n_dof(self) -> int:
        return len(self.dofs)

    @property
    def directions(self) -> tuple[str, ...]:
        return self.model.directions

    def dof_index(self, mass_id: str, direction: str) -> int:
        """Row of ``(mass_id, direction)`` in ``dofs`` (raises ModelError if it is not a DOF)."""
        try:
            return self._dof_lookup()[(mass_id, direction)]
        except KeyError:
            raise ModelError(_no_dof_message(self.model, mass_id, direction)) from None

    def _dof_lookup(self):
        lookup = self.__dict__.get("_lookup")
        if lookup is None:
            lookup = {d: i for i, d in enumerate(self.dofs)}
            object.__setattr__(self, "_lookup", lookup)
        return lookup

    def influence(self, direction: str) -> np.ndarray:
        """Influence vector r on ``dofs``: 1 on DOFs that move in ``direction`` (rigid base motion)."""
        return np.array([1.0 if d == direction else 0.0 for _, d in self.dofs])

    def node_motion(self, vector_all) -> dict:
        """Split a vector on ``all_dofs`` into ``{mass_id: {direction: value}}``."""
        out: dict = {}
        for (mid, d), v in zip(self.all_dofs, np.asarray(vector_all)):
            out.setdefault(mid, {})[d] = float(v)
        return out

    def dense(self, name: str) -> np.ndarray:
        mat = getattr(self, name)
        return mat.toarray() if sp.issparse(mat) else np.asarray(mat)


def _no_dof_message(model: Model, mass_id: str, direction: str) -> str:
    try:
        node = model.node(mass_id)
    except ModelError:
        return f"{quoted_id(model, mass_id)} is not a mass in the model"
    if not hasattr(node, "mass"):
        return f"{quoted_id(model, mass_id)} is an anchor; it has no degrees of freedom"
    if direction not in model.directions:
        return (f'{named(node)}: direction "{direction}" does not exist in this model'
                f' (allowed: {", ".join(model.directions)})')
    if direction in node.fixed:
        return f"{named(node)} is locked in {direction}"
    return f"{named(node)} is massless; its {direction} motion is condensed out"


@checked_arguments
def assemble(model: Model, sparse: bool | None = None) -> System:
    """Assemble M, K and C of a model, condensing massless junctions.

    Parameters
    ----------
    model : Model
    sparse : bool, optional
        Force sparse (True) or dense (False) storage; by default sparse above
        ``SPARSE_DOF_LIMIT`` DOFs.
    """
    if not isinstance(model, Model):
        raise ModelError(f"assemble: expected a Model, got {type(model).__name__}")
    directions = model.directions
    all_dofs = []
    mass_of_dof = []
    mass_dofs: dict = {}
    for m in model.masses:
        idx = []
        for d in directions:
            if d in m.fixed:
                idx.append(-1)
                continue
            idx.append(len(all_dofs))
            all_dofs.append((m.id, d))
            mass_of_dof.append(m.mass)
        mass_dofs[m.id] = idx
    n_all = len(all_dofs)
    nd = len(directions)
    ground = [-1] * nd
    node_dofs = dict(mass_dofs)
    positions = {el.id: (el.x, el.y) for el in model.masses + model.anchors}
    for a in model.anchors:
        node_dofs[a.id] = ground
    warnings = []

    def element_arrays(elements, value_name):
        count = len(elements)
        dofs = np.full((count, 2 * nd), -1, dtype=np.int64)
        axis = np.zeros((count, 2))
        for i, el in enumerate(elements):
            dofs[i, :nd] = node_dofs[el.a]
            dofs[i, nd:] = node_dofs[el.b]
            if model.kind == "planar":
                (xa, ya), (xb, yb) = positions[el.a], positions[el.b]
                dx, dy = xb - xa, yb - ya
                length = np.hypot(dx, dy)
                axis[i] = (dx / length, dy / length)
        return dofs, axis

    def stiffness_coo(dofs, axis, values, transverse=None):
        count = len(values)
        if count == 0:
            return np.zeros(0, np.int64), np.zeros(0, np.int64), np.zeros(0)
        if nd == 1:
            S = np.asarray(values, float).reshape(count, 1, 1)
        else:
            e = axis
            nvec = np.stack([-e[:, 1], e[:, 0]], axis=1)
            S = np.asarray(values, float)[:, None, None] * np.einsum("ni,nj->nij", e, e)
            if transverse is not None:
                S = S + np.asarray(transverse, float)[:, None, None] * np.einsum(
                    "ni,nj->nij", nvec, nvec)
        local = np.block([[S, -S], [-S, S]])
        rows = np.repeat(dofs[:, :, None], 2 * nd, axis=2)
        cols = np.repeat(dofs[:, None, :], 2 * nd, axis=1)
        keep = (rows >= 0) & (cols >= 0)
        return rows[keep], cols[keep], local[keep]

    springs = model.springs
    s_dofs, s_axis = element_arrays(springs, "k")
    k_vals = [s.k for s in springs]
    kt_vals = [s.k_t for s in springs] if model.kind == "planar" else None
    r, c, v = stiffness_coo(s_dofs, s_axis, k_vals, kt_vals)
    K_full = sp.coo_matrix((v, (r, c)), shape=(n_all, n_all)).tocsr()
    d_dofs, d_axis = element_arrays(model.dampers, "c")
    r, c, v = stiffness_coo(d_dofs, d_axis, [d.c for d in model.dampers])
    C_full = sp.coo_matrix((v, (r, c)), shape=(n_all, n_all)).tocsr()
    masses = np.asarray(mass_of_dof, float)
    M_full = sp.diags(masses, format="csr") if n_all else sp.csr_matrix((0, 0))

    for m in model.masses:
        extra = [d for d in m.fixed if d not in directions]
        if extra:
            warnings.append(f'{named(m)}: locked direction {", ".join(extra)} does not exist'
                            f' in this model (it moves in {", ".join(directions)}); ignored')
    for s in springs:
        if s.a in node_dofs and s.b in node_dofs and all(i < 0 for i in node_dofs[s.a]) and all(
                i < 0 for i in node_dofs[s.b]):
            warnings.append(f"{named(s)} joins two fixed points; it has no effect")
        if s.k_t and model.kind != "planar":
            warnings.append(f"{named(s)}: transverse stiffness k_t acts only in planar models;"
                            " it is ignored here")
    if model.kind == "planar" and not model.anchors and any(s.k_t > 0 for s in springs):
        warnings.append("a transverse stiffness k_t resists the sideways motion of one end"
                        " relative to the other, rigid rotation included: a free-floating"
                        " layout with k_t springs has fewer than three rigid-body modes")

    use_sparse = (n_all > SPARSE_DOF_LIMIT) if sparse is None else bool(sparse)
    retained = np.flatnonzero(masses > 0)
    slaves = np.flatnonzero(masses == 0)
    dofs = tuple(all_dofs[i] for i in retained)
    loose = np.zeros((n_all, 0))
    B, w = factor.spring_rows(s_dofs, s_axis, k_vals, kt_vals, n_all)
    if len(slaves) == 0:
        recovery = sp.identity(n_all, format="csr")
        M, K, C = M_full, K_full, C_full
        K_factor = sp.diags(w) @ B
    else:
        K, C, recovery, msg, loose, K_factor = _condense(K_full, C_full, retained, slaves,
                                                         all_dofs, B, w, model)
        M = sp.diags(masses[retained], format="csr")
        warnings.extend(msg)
        if model.dampers and C_full[slaves][:, :].nnz:
            warnings.append("a dashpot is attached to a massless junction; free response,"
                            " damped modes and frequency responses solve the junction's creep"
                            " exactly, but the condensed damping matrix C of assemble() only"
                            " approximates it")
    if not use_sparse:
        M, K, C = (np.asarray(x.toarray()) for x in (M, K, C))
        recovery = np.asarray(recovery.toarray()) if sp.issparse(recovery) else recovery
        M_full, K_full, C_full = (np.asarray(x.toarray()) for x in (M_full, K_full, C_full))
    C_dash = C
    C, msg = _model_damping(model, M, K, C_dash)
    warnings.extend(msg)
    return System(model=model, M=M, K=K, C=C, C_dashpots=C_dash, dofs=dofs,
                  all_dofs=tuple(all_dofs),
                  recovery=recovery, M_full=M_full, K_full=K_full, C_full=C_full,
                  sparse=use_sparse, warnings=tuple(warnings), spring_dofs=s_dofs,
                  spring_axis=s_axis, mass_dofs=mass_dofs, loose=loose,
                  K_factor=None if K_factor is None else sp.csr_matrix(K_factor))


#: Modal damping needs every mode to build C; above this many DOFs it is left out of C (warned).
MODAL_DAMPING_DOF_LIMIT = 3000


def _model_damping(model: Model, M, K, C_dash):
    """C = dashpots + the damping model's matrix on the retained DOFs."""
    d = model.damping
    n = M.shape[0]
    if d.model == "rayleigh" and (d.alpha or d.beta):
        return C_dash + d.alpha * M + d.beta * K, []
    if d.model != "modal" or n == 0:
        return C_dash, []
    if n > MODAL_DAMPING_DOF_LIMIT:
        return C_dash, [f"modal damping ratios need every mode; with {n} DOFs they are left out"
                        " of the damping matrix C (use Rayleigh damping or dashpots)"]
    m = np.asarray(M.diagonal()).ravel()
    Kd = K.toarray() if sp.issparse(K) else np.asarray(K)
    s = 1.0 / np.sqrt(m)
    lam, u = scipy.linalg.eigh(Kd * s[:, None] * s[None, :], driver="evd")
    w = np.sqrt(np.maximum(lam, 0.0))
    zeta = np.full(n, d.ratio)
    for mode, ratio in d.mode_ratios:
        if mode <= n:
            zeta[mode - 1] = ratio
    # M Phi = M^(1/2) U for mass-normalised Phi = M^(-1/2) U
    MPhi = u * np.sqrt(m)[:, None]
    Cm = (MPhi * (2 * zeta * w)[None, :]) @ MPhi.T
    if sp.issparse(C_dash):
        return sp.csr_matrix(C_dash + Cm), []
    return C_dash + Cm, []


def _condense(K_full, C_full, retained, slaves, all_dofs, B, w, model):
    """Static condensation of the massless DOFs ``slaves``.

    By orthogonal projection of the stiffness factor ``diag(w) B`` (solver/factor.py), which
    stays accurate and semi-definite whatever the stiffness contrast and however large the
    cluster of junctions.

    Returns K, C, recovery, warnings, the loose junction directions (see ``System.loose``) and
    the condensed stiffness factor. ``model`` names the junctions in the warnings.
    """
    warnings = []
    owner = {}
    node = np.array([owner.setdefault(mid, len(owner)) for mid, _d in all_dofs], dtype=np.int64)
    cond = factor.condense(B, w, retained, slaves, node)
    K_factor = cond.factor
    G = cond.G
    null = cond.null
    loose = null.shape[1]
    if loose:
        # the junctions that take part in an unheld direction (a spring at an angle leaves a
        # combination of x and y loose, so a zero diagonal of K would miss them)
        share = np.linalg.norm(np.asarray(null), axis=1)
        names = sorted({all_dofs[i][0] for i in slaves[np.flatnonzero(
            share > 1e-6 * share.max(initial=0.0))]})
        detail = f' (e.g. {", ".join(quoted_id(model, n) for n in names[:3])})' if names else ""
        warnings.append(f"{loose} direction(s) of massless junctions{detail} are held by no"
                        " spring; their motion is undetermined and shown as zero")
    K = K_factor.T @ K_factor
    K = (K + K.T) * 0.5
    Cmm = C_full[retained][:, retained]
    Cms = C_full[retained][:, slaves]
    Csm = C_full[slaves][:, retained]
    Css = C_full[slaves][:, slaves]
    C = Cmm + Cms @ G + G.T @ Csm + G.T @ Css @ G
    n_all = K_full.shape[0]
    # directions no spring holds and no dashpot damps: Z(w) = K - w^2 M + i w C is singular
    # along them at every frequency; the direct frequency-domain solve takes them out
    loose_full = np.zeros((n_all, 0))
    if null.shape[1]:
        Css_d = Css.toarray() if sp.issparse(Css) else np.asarray(Css)
        c_scale = max(np.abs(Css_d).max(initial=0.0), 1e-300)
        # undamped directions inside the undetermined ones: the null space of N^T Css N (a
        # combination of damped basis vectors can itself be undamped)
        w, V = np.linalg.eigh(null.T @ Css_d @ null)
        free = V[:, np.abs(w) <= 1e-11 * c_scale]
        if free.shape[1]:
            q, _r = np.linalg.qr(null @ free)
            loose_full = np.zeros((n_all, free.shape[1]))
            loose_full[np.asarray(slaves)] = q
    # recovery: rows of retained DOFs are identity, rows of slaves are G
    rec = sp.lil_matrix((n_all, len(retained)))
    rec[retained, np.arange(len(retained))] = 1.0
    rec = rec.tocsr()
    rec_s = sp.csr_matrix((np.ones(len(slaves)), (slaves, np.arange(len(slaves)))),
                          shape=(n_all, len(slaves)))
    recovery = rec + rec_s @ G
    return (sp.csr_matrix(K), sp.csr_matrix(C), recovery.tocsr(), warnings, loose_full,
            K_factor)
