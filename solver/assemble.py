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

Rigid bodies (planar masses with an inertia > 0) have a third DOF ``theta``. A spring or dashpot
end attached at offset ``o = (ox, oy)`` from a body's centre moves by ``(ux - theta oy,
uy + theta ox)`` (small rotations), and the line ``e`` runs between the two attachment points, so
a spring's axial stretch is ``e . (u_b - u_a) + theta_b (o_b x e) - theta_a (o_a x e)`` (and its
shear the same with ``n``): one row of coefficients per spring (``System.spring_coef``), which K,
the stiffness factor and every strain computation share.

Gear stages (torsion): a mesh stiffness is one more row, ``sqrt(k_mesh) (theta_a - n theta_b)``. A
rigid mesh is the constraint ``theta_a - n theta_b = 0``, eliminated exactly: every disc's angle is
``T q`` with ``T`` (``System.gear_basis``) a basis of the constraints' null space, one column per
set of discs joined by rigid meshes (its first disc with inertia is the set's coordinate, scaled
1 there), so chains and branches of stages are one column each; a loop of stages whose ratios do
not multiply to 1 locks its discs (warned). The eigenproblem, the junction condensation and the
direct solves work on ``q`` (``M_q = T^T M T`` stays diagonal, the sets being disjoint); the
other discs' motion is recovered through ``recovery``, as junction motion is.
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
    #: (n_springs, 2, 2 nd) coefficients of each spring's axial (row 0) and transverse (row 1)
    #: stretch on the DOFs ``spring_dofs`` (nd = DOFs per node: 1, 2, or 3 with rigid bodies)
    spring_coef: np.ndarray = field(default=None, repr=False)
    #: (n_mesh, n_all) sparse geometry rows of gear meshes with a stiffness
    #: (``theta_a - n theta_b``) and their weights sqrt(k_mesh); empty without such gears
    mesh_rows: object = field(default=None, repr=False)
    mesh_weights: np.ndarray = field(default=None, repr=False)
    #: (n_all, n_q) sparse: every disc's angle from the coordinates rigid gear meshes leave
    #: (None without rigid meshes: q is all_dofs). ``loose`` is then on q, ``solve_dofs``.
    gear_basis: object = field(default=None, repr=False)
    solve_dofs: tuple = field(default=None, repr=False)

    @property
    def node_directions(self) -> tuple[str, ...]:
        """The directions of ``spring_dofs``/``mass_dofs`` per node (theta added when the
        model has a rigid body)."""
        if self.model.bodies:
            return ("x", "y", "theta")
        return self.model.directions

    @property
    def n_dof(self) -> int:
        return len(self.dofs)

    @property
    def directions(self) -> tuple[str, ...]:
        """Directions of motion in the model: the kind's, and theta in a planar model with a
        rigid body (the effective-mass keys)."""
        return self.node_directions

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


def diagonal(values) -> sp.csr_matrix:
    """``diag(values)`` as a CSR matrix (what ``scipy.sparse.diags(values, format="csr")``
    gives, built directly: that call costs ~0.2 ms, a good part of assembling a small model)."""
    values = np.asarray(values, float).ravel()
    n = values.shape[0]
    index = np.arange(n, dtype=np.int32)
    return sp.csr_matrix((values.copy(), index, np.arange(n + 1, dtype=np.int32)), shape=(n, n))


def scaled_rows(w, B) -> sp.csr_matrix:
    """``diag(w) @ B`` for a sparse ``B``: each stored entry of row i times ``w[i]`` (the same
    products as the matrix product, without building the diagonal matrix)."""
    B = sp.csr_matrix(B, copy=True)
    B.data *= np.repeat(np.asarray(w, float), np.diff(B.indptr))
    B.eliminate_zeros()         # an entry that underflows to zero, as the product drops it
    return B


def spring_stretch(system: System, V_all) -> tuple[np.ndarray, np.ndarray]:
    """(axial, transverse) stretch of every spring, (n_springs, n_cols) each, under motions
    ``V_all`` (n_all, n_cols) on ``all_dofs``: end b against end a at the attachment points,
    along the spring's line and across it (zero on a line or a shaft)."""
    V_all = np.asarray(V_all)
    cols = V_all.shape[1] if V_all.ndim == 2 else 1
    if cols == 0:       # no motion at all (every mass locked: a model with no mode)
        z = np.zeros((0 if system.spring_dofs is None else len(system.spring_dofs), 0))
        return z, z
    V = np.vstack([V_all.reshape(-1, cols), np.zeros((1, cols), V_all.dtype)])  # -1: ground
    idx = system.spring_dofs
    coef = system.spring_coef
    if idx is None or len(idx) == 0:
        z = np.zeros((0, cols))
        return z, z
    U = V[idx]                                  # (n_s, 2 nd, n_cols)
    axial = np.einsum("si,sim->sm", coef[:, 0, :], U)
    trans = np.einsum("si,sim->sm", coef[:, 1, :], U)
    return axial, trans


def _no_dof_message(model: Model, mass_id: str, direction: str) -> str:
    try:
        node = model.node(mass_id)
    except ModelError:
        return f"{quoted_id(model, mass_id)} is not a mass in the model"
    if not hasattr(node, "mass"):
        return f"{quoted_id(model, mass_id)} is an anchor; it has no degrees of freedom"
    own = model.directions_of(node)
    if direction not in own:
        extra = (" (theta is a rigid body's rotation: give the mass an inertia > 0)"
                 if direction == "theta" and model.kind == "planar" else "")
        return (f'{named(node)}: direction "{direction}" does not exist in this model'
                f' (allowed: {", ".join(own)}){extra}')
    if direction in node.fixed:
        return f"{named(node)} is locked in {direction}"
    if model.gears and node.mass > 0:
        return (f"{named(node, 'disc')} turns with the disc its rigid gear mesh ties it to; its"
                " theta is recovered from that disc's, not a coordinate of its own")
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
    node_dirs = ("x", "y", "theta") if model.bodies else model.directions
    all_dofs = []
    mass_of_dof = []
    mass_dofs: dict = {}
    for m in model.masses:
        idx = []
        own = model.directions_of(m)
        for d in node_dirs:
            if d not in own or d in m.fixed:
                idx.append(-1)
                continue
            idx.append(len(all_dofs))
            all_dofs.append((m.id, d))
            mass_of_dof.append(m.inertia if d == "theta" and model.kind == "planar" else m.mass)
        mass_dofs[m.id] = idx
    n_all = len(all_dofs)
    nd = len(node_dirs)
    ground = [-1] * nd
    node_dofs = dict(mass_dofs)
    positions = {el.id: (el.x, el.y) for el in model.masses + model.anchors}
    for a in model.anchors:
        node_dofs[a.id] = ground
    warnings = []

    def element_arrays(elements):
        """DOF indices (count, 2 nd), unit axes (count, 2) between the attachment points and
        stretch coefficients (count, 2, 2 nd): axial row, transverse row."""
        count = len(elements)
        dofs = np.full((count, 2 * nd), -1, dtype=np.int64)
        axis = np.zeros((count, 2))
        coef = np.zeros((count, 2, 2 * nd))
        for i, el in enumerate(elements):
            dofs[i, :nd] = node_dofs[el.a]
            dofs[i, nd:] = node_dofs[el.b]
        if model.kind != "planar":
            coef[:, 0, 0], coef[:, 0, 1] = -1.0, 1.0
            return dofs, axis, coef
        pa = np.array([positions[el.a] for el in elements], float).reshape(count, 2)
        pb = np.array([positions[el.b] for el in elements], float).reshape(count, 2)
        oa = np.array([el.a_offset for el in elements], float).reshape(count, 2)
        ob = np.array([el.b_offset for el in elements], float).reshape(count, 2)
        delta = (pb + ob) - (pa + oa)
        length = np.hypot(delta[:, 0], delta[:, 1])
        axis = delta / np.where(length > 0, length, 1.0)[:, None]
        nvec = np.stack([-axis[:, 1], axis[:, 0]], axis=1)
        for row, u in ((0, axis), (1, nvec)):
            coef[:, row, 0:2] = -u
            coef[:, row, nd:nd + 2] = u
            if nd == 3:
                # an end at offset o moves by theta (-oy, ox): along u that is theta (o x u)
                coef[:, row, 2] = -(oa[:, 0] * u[:, 1] - oa[:, 1] * u[:, 0])
                coef[:, row, 5] = ob[:, 0] * u[:, 1] - ob[:, 1] * u[:, 0]
        return dofs, axis, coef

    def stiffness_coo(dofs, coef, values, transverse=None):
        count = len(values)
        if count == 0:
            return np.zeros(0, np.int64), np.zeros(0, np.int64), np.zeros(0)
        c0 = coef[:, 0, :]
        local = np.asarray(values, float)[:, None, None] * np.einsum("ni,nj->nij", c0, c0)
        if transverse is not None:
            c1 = coef[:, 1, :]
            local = local + np.asarray(transverse, float)[:, None, None] * np.einsum(
                "ni,nj->nij", c1, c1)
        rows = np.repeat(dofs[:, :, None], 2 * nd, axis=2)
        cols = np.repeat(dofs[:, None, :], 2 * nd, axis=1)
        keep = (rows >= 0) & (cols >= 0)
        return rows[keep], cols[keep], local[keep]

    springs = model.springs
    s_dofs, s_axis, s_coef = element_arrays(springs)
    k_vals = [s.k for s in springs]
    kt_vals = [s.k_t for s in springs] if model.kind == "planar" else None
    r, c, v = stiffness_coo(s_dofs, s_coef, k_vals, kt_vals)
    K_full = sp.coo_matrix((v, (r, c)), shape=(n_all, n_all)).tocsr()
    d_dofs, _d_axis, d_coef = element_arrays(model.dampers)
    r, c, v = stiffness_coo(d_dofs, d_coef, [d.c for d in model.dampers])
    C_full = sp.coo_matrix((v, (r, c)), shape=(n_all, n_all)).tocsr()
    masses = np.asarray(mass_of_dof, float)
    M_full = diagonal(masses)
    mesh_rows, mesh_w = _mesh_rows(model, mass_dofs, n_all)
    if mesh_rows.shape[0]:
        K_full = (K_full + mesh_rows.T @ sp.diags(mesh_w ** 2) @ mesh_rows).tocsr()

    for m in model.masses:
        extra = [d for d in m.fixed if d not in model.directions_of(m)]
        if extra:
            own = model.directions_of(m)
            warnings.append(f'{named(m)}: locked direction {", ".join(extra)} does not exist'
                            f' in this model (it moves in {", ".join(own)}); ignored')
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
    B, w = factor.spring_rows(s_dofs, s_coef, k_vals, kt_vals, n_all)
    if mesh_rows.shape[0]:
        B = sp.vstack([B, mesh_rows], format="csr")
        w = np.concatenate([w, mesh_w])
    T, q_dofs, msg = _gear_basis(model, all_dofs, masses)
    warnings.extend(msg)
    if T is not None:
        # the rigid meshes eliminated: everything below works on q (all_dofs = T q)
        Bq = sp.csr_matrix(B @ T)
        keep = np.flatnonzero(np.diff(Bq.indptr) > 0)
        Bq, wq = Bq[keep], w[keep]
        mq = np.asarray(T.multiply(T).T @ masses).ravel()
        Kq = sp.csr_matrix(T.T @ K_full @ T)
        Cq = sp.csr_matrix(T.T @ C_full @ T)
    else:
        Bq, wq, mq, Kq, Cq, q_dofs = B, w, masses, K_full, C_full, tuple(all_dofs)
    n_q = len(q_dofs)
    retained = np.flatnonzero(mq > 0)
    slaves = np.flatnonzero(mq == 0)
    dofs = tuple(q_dofs[i] for i in retained)
    loose = np.zeros((n_q, 0))
    if len(slaves) == 0:
        recovery = sp.identity(n_q, format="csr")
        M, K, C = diagonal(mq), Kq, Cq
        K_factor = scaled_rows(wq, Bq)
    else:
        K, C, recovery, msg, loose, K_factor = _condense(Kq, Cq, retained, slaves,
                                                         list(q_dofs), Bq, wq, model)
        M = diagonal(mq[retained])
        warnings.extend(msg)
        if model.dampers and Cq[slaves][:, :].nnz:
            warnings.append("a dashpot is attached to a massless junction; free response,"
                            " damped modes and frequency responses solve the junction's creep"
                            " exactly, but the condensed damping matrix C of assemble() only"
                            " approximates it")
    if T is not None:
        recovery = sp.csr_matrix(T @ recovery)
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
                  K_factor=None if K_factor is None else sp.csr_matrix(K_factor),
                  spring_coef=s_coef, mesh_rows=mesh_rows, mesh_weights=mesh_w,
                  gear_basis=T, solve_dofs=tuple(q_dofs))


def _mesh_rows(model: Model, mass_dofs: dict, n_all: int):
    """Rows ``theta_a - n theta_b`` (sparse (n_mesh, n_all)) of the gear stages with a mesh
    stiffness, and their weights sqrt(k_mesh); a locked disc contributes nothing."""
    rows, cols, vals, w = [], [], [], []
    for g in model.gears:
        if g.k_mesh is None:
            continue
        for node, value in ((g.a, 1.0), (g.b, -g.ratio)):
            i = mass_dofs[node][0]
            if i >= 0:
                rows.append(len(w))
                cols.append(i)
                vals.append(value)
        w.append(np.sqrt(g.k_mesh))
    B = sp.csr_matrix((vals, (rows, cols)), shape=(len(w), n_all))
    return B, np.asarray(w, float)


def _gear_basis(model: Model, all_dofs, masses):
    """(T, q_dofs, warnings) for the rigid gear meshes: T (n_all, n_q) sparse with every disc's
    angle = T q, or None when there is no rigid mesh.

    Each set of discs joined by rigid meshes gets the null space of its constraints
    ``theta_a - n theta_b = 0`` (one vector for a chain, a branch or a consistent loop), scaled
    to 1 on its first disc with inertia, which names the coordinate; a loop whose ratios
    disagree, or a set holding a locked disc, has none: its discs cannot turn.
    """
    rigid = [g for g in model.gears if g.k_mesh is None]
    if not rigid:
        return None, tuple(all_dofs), []
    from scipy.sparse.csgraph import connected_components

    n_all = len(all_dofs)
    index = {mid: i for i, (mid, _d) in enumerate(all_dofs)}
    # a locked disc is a node of its own (no DOF): constraints on it hold the other disc still
    ids = [m.id for m in model.masses]
    node = {mid: i for i, mid in enumerate(ids)}
    a = [node[g.a] for g in rigid]
    b = [node[g.b] for g in rigid]
    graph = sp.coo_matrix((np.ones(len(a)), (a, b)), shape=(len(ids), len(ids)))
    n_c, label = connected_components(graph, directed=False)
    cols, rows, vals, q_dofs, warnings = [], [], [], [], []
    grouped = {}
    for g in rigid:
        grouped.setdefault(label[node[g.a]], []).append(g)
    done = set()
    for i, (mid, d) in enumerate(all_dofs):
        lab = label[node[mid]]
        if lab not in grouped:
            rows.append(i)
            cols.append(len(q_dofs))
            vals.append(1.0)
            q_dofs.append((mid, d))
            continue
        if lab in done:
            continue
        done.add(lab)
        members = [m for m in ids if label[node[m]] == lab]
        free = [m for m in members if m in index]
        local = {m: j for j, m in enumerate(free)}
        C = np.zeros((len(grouped[lab]), len(free)))
        for r, g in enumerate(grouped[lab]):
            if g.a in local:
                C[r, local[g.a]] += 1.0
            if g.b in local:
                C[r, local[g.b]] -= g.ratio
        _u, sv, vt = np.linalg.svd(C, full_matrices=True)
        scale = max(sv.max(initial=0.0), 1.0)
        rank = int(np.sum(sv > 1e-10 * scale))
        null = vt[rank:].T
        if null.shape[1] == 0:
            if len(free) == len(members):
                warnings.append(
                    "the gear stages joining discs "
                    + ", ".join(quoted_id(model, m) for m in members[:4])
                    + " form a loop whose speed ratios do not multiply to 1; the mesh locks"
                    " them (they cannot turn)")
            continue
        # one vector (a connected set of constraints leaves at most one motion)
        v = null[:, 0]
        weight = [masses[index[m]] for m in free]
        lead = next((j for j, m in enumerate(free) if weight[j] > 0), 0)
        v = v / v[lead]
        for j, m in enumerate(free):
            if abs(v[j]) > 0:
                rows.append(index[m])
                cols.append(len(q_dofs))
                vals.append(float(v[j]))
        q_dofs.append((free[lead], "theta"))
    T = sp.csr_matrix((vals, (rows, cols)), shape=(n_all, len(q_dofs)))
    return T, tuple(q_dofs), warnings


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
