"""The sketch scene: draws the document's model and turns mouse gestures into document edits.

The interaction mode (:class:`Mode`) is explicit state of the scene: select/move, place mass, place
anchor, place a rigid body (planar), connect with a spring, a dashpot or a gear stage (torsion).
A connection started or ended on a rigid body attaches at the point pressed (on the grid, from the
body's centre) or on the mount point pressed; dragging a mount point moves every attachment there
as one edit. A move is previewed by Qt's own item dragging
(springs follow their nodes live) and becomes one document edit when the mouse is released; a
connection is previewed as a rubber line and becomes one edit when released on a second node.
The scene never changes the model directly: it calls the Document, which answers with
``model_changed``, and the scene then brings its items up to date by element id.
"""

from __future__ import annotations

import dataclasses
import enum

from PySide6.QtCore import QLineF, QPointF, QRectF, Qt, Signal
from PySide6.QtGui import QPainter, QPainterPath, QPen
from PySide6.QtWidgets import QGraphicsItem, QGraphicsLineItem, QGraphicsPathItem, QGraphicsScene

from app.drawing import bodies
from app.drawing.style import current_style
from solver.errors import ModelError
from solver.model import Damper, Gear, Mass, Spring

from .anchor_item import AnchorItem, normal_towards
from .dashpot_item import DashpotItem
from .gear_item import GearItem
from .geometry import Mapper
from .link_item import LinkItem
from .mass_item import MassItem
from .mount_item import MountItem
from .node_item import NodeItem
from .spring_item import SpringItem


class Mode(enum.Enum):
    SELECT = "select"
    PLACE_MASS = "place mass"
    PLACE_ANCHOR = "place anchor"
    PLACE_BODY = "place body"
    CONNECT_SPRING = "connect spring"
    CONNECT_DASHPOT = "connect dashpot"
    CONNECT_GEAR = "connect gear"


#: Per mode: menu text, keyboard shortcut, status-bar hint.
MODE_INFO = {
    Mode.SELECT: ("&Select", "S", "Select: click an element, drag to move, drag on empty canvas to"
                  " select an area; Tab walks the elements, arrows nudge; wheel zooms, middle"
                  " button pans"),
    Mode.PLACE_MASS: ("Place &mass", "M", "Place mass: click where the mass goes, or arrows/Tab"
                      " and Enter (Esc: back to select)"),
    Mode.PLACE_ANCHOR: ("Place &anchor", "A", "Place anchor: click where the ground point goes, or"
                        " arrows/Tab and Enter (Esc: back to select)"),
    Mode.PLACE_BODY: ("Place rigid &body", "B", "Place rigid body (planar models): click where"
                      " its centre of mass goes; it turns as well as moves. Springs started or"
                      " ended on it attach where you press (Esc: back to select)"),
    Mode.CONNECT_SPRING: ("Connect s&pring", "K", "Connect spring: drag from one mass or anchor"
                          " to another (on a rigid body: from or to the mount point pressed),"
                          " or Tab to a node, Enter, Tab on, Enter (Esc: back)"),
    Mode.CONNECT_DASHPOT: ("Connect &dashpot", "D", "Connect dashpot: drag from one mass or"
                           " anchor to another, or Tab to a node, Enter, Tab on, Enter (Esc: back)"),
    Mode.CONNECT_GEAR: ("Connect gea&r stage", "R", "Connect gear stage (torsion models): drag"
                        " from the disc on the faster shaft to the disc it drives; the speed"
                        " ratio starts at 2 and is edited in Properties (Esc: back)"),
}

#: Model kinds a tool works in (the others every kind).
MODE_KINDS = {Mode.PLACE_BODY: ("planar",), Mode.CONNECT_GEAR: ("torsion",)}
#: A new rigid body: its mass (kg) and rotary inertia (kg m^2), a 1 kg block about 0.3 m square.
NEW_BODY = (1.0, 0.015)
#: A new gear stage's speed ratio (a common single-stage reduction; edited in Properties).
NEW_GEAR_RATIO = 2.0

_PARALLEL_GAP = 16.0  # scene units between links joining the same two nodes


class ModelScene(QGraphicsScene):
    """Scene showing ``document.model``.

    Signals
    -------
    mode_changed(Mode)
    status_message(str)
        A hint or the reason an edit was refused, for the status bar.
    selection_ids_changed(list)
        Ids of the selected elements, after every selection change.
    """

    mode_changed = Signal(object)
    status_message = Signal(str)
    selection_ids_changed = Signal(list)

    def __init__(self, document, parent=None):
        super().__init__(parent)
        self.document = document
        self.mode = Mode.SELECT
        self.snap = True
        self.unit_system = "SI"      # display units of the messages (the model stays SI)
        self.mapper = Mapper()
        self.nodes: dict[str, NodeItem] = {}
        self.links: dict[str, LinkItem] = {}
        self._syncing = False
        self._press_positions: dict[str, QPointF] | None = None
        self._connect_from: str | None = None
        self._preview: QGraphicsLineItem | None = None
        self._kb_connecting = False     # a connection started with Enter ends with Enter
        self._nudges = 0
        self._kb_cursor: QGraphicsPathItem | None = None
        self._clipboard: tuple = ()
        self._paste_count = 0
        self._connect_offset = bodies.ORIGIN
        self._mount_drag: MountItem | None = None
        self.selectionChanged.connect(self._on_selection_change)
        document.model_changed.connect(self._on_model_change)
        document.opened.connect(self._on_open)
        self._on_open(document.model)

    def _on_open(self, model) -> None:
        """A different model: choose its scale and draw it afresh."""
        self._cancel_connect()
        self._synced_model = None
        for item in list(self.nodes.values()) + list(self.links.values()):
            self.removeItem(item)
        self.nodes.clear()
        self.links.clear()
        self.mapper = Mapper.for_model(model)
        for view in self.views():   # a new grid spacing: the cached background is stale
            view.resetCachedContent()
        self._on_model_change(model)

    # -- mode ---------------------------------------------------------------------------------
    def set_mode(self, mode: Mode) -> None:
        self._cancel_connect()
        kinds = MODE_KINDS.get(mode)
        if kinds is not None and self.document.model.kind not in kinds:
            self.status_message.emit(f"{MODE_INFO[mode][0].replace('&', '')} works in"
                                     f" {' and '.join(kinds)} models; this is a"
                                     f" {self.document.model.kind} model")
            if self.mode != Mode.SELECT:
                self.set_mode(Mode.SELECT)
            else:
                self.mode_changed.emit(self.mode)   # the tool buttons show select again
            return
        if mode == Mode.SELECT:
            self._hide_cursor()
        if mode != self.mode:
            self.mode = mode
            self.mode_changed.emit(mode)
        self.status_message.emit(MODE_INFO[mode][2])

    # -- model -> items -----------------------------------------------------------------------
    def _on_model_change(self, model) -> None:
        self._syncing = True
        try:
            selected = set(self.selected_ids())
            touched = self._sync_changed_only(model)
            if touched is None:
                self._sync(model)
            for eid, item in list(self.nodes.items()) + list(self.links.items()):
                if item.isSelected() != (eid in selected):
                    item.setSelected(eid in selected)
        finally:
            self._syncing = False
        if touched is None or touched:
            # a value edit that moved nothing and renamed nothing leaves every label where it is
            self.place_labels()
            self._update_scene_rect()
        self._on_selection_change()

    #: At most this many changed elements take the fast path of :meth:`_sync_changed_only`.
    FAST_SYNC_LIMIT = 16

    def _sync_changed_only(self, model):
        """Refresh only the items whose element changed since the last sync, when the model kept
        its structure (the same elements in the same order, links between the same points, no
        rigid bodies, the same reference mass): a typed value, an undo of it, a dragged mass on
        1000 masses touches a few items, not all (bench/edit_bench.py). Returns the items whose
        position, label or symbol size changed (empty: no label needs placing again), or None
        when the full :meth:`_sync` must run."""
        prev = getattr(self, "_synced_model", None)
        if prev is None or prev.kind != model.kind or prev.axis != model.axis:
            return None
        diffs = {}
        for group in ("masses", "anchors", "springs", "dampers", "gears"):
            old, new = getattr(prev, group), getattr(model, group)
            if len(old) != len(new):
                return None
            diff = [(o, n) for o, n in zip(old, new) if o is not n]
            if len(diff) > self.FAST_SYNC_LIMIT or any(o.id != n.id for o, n in diff):
                return None
            diffs[group] = diff
        if model.kind == "planar" and any(m.inertia > 0 for m in model.masses):
            return None     # mount points and elastic centres depend on every spring
        for o, n in diffs["springs"] + diffs["dampers"] + diffs["gears"]:
            if bodies.link_key(o) != bodies.link_key(n) or (o.a, o.b) != (n.a, n.b):
                return None  # reconnected: lanes of parallel links change
        if any(o.mass != n.mass for o, n in diffs["masses"]):
            return None      # the reference mass (block sizes) may change
        moved = {n.id for o, n in diffs["masses"] + diffs["anchors"]}
        if any(item.pos() != item._sync_pos for eid, item in self.nodes.items()
               if eid not in moved):
            return None      # a drag preview the model refused: put every item back
        adjacency = self._adjacency
        links = {n.id: n for o, n in diffs["springs"] + diffs["dampers"] + diffs["gears"]}
        for nid in moved:
            for lid in adjacency.get(nid, ()):
                links.setdefault(lid, model.element(lid))
        anchors = {n.id: n for o, n in diffs["anchors"]}
        for nid in moved:
            for other in self._anchor_of.get(nid, ()):
                anchors.setdefault(other, model.element(other))
        touched = []

        def drawing(item):
            if item.element_id in self.links:
                return (item.label_item.text(), item.endpoints())
            return (item.pos(), item.label_item.text(), item.symbol_rect().width())

        def refreshed(item, refresh):
            # an item refreshed puts its label back where it likes it; when its drawing is the
            # same, the place found among the others stays right: put the label back there
            was, label = drawing(item), item.label_item
            place, visible = label.pos(), label.isVisible()
            refresh()
            if drawing(item) != was:
                touched.append(item)
            else:
                label.setPos(place)
                label.setVisible(visible)

        for o, m in diffs["masses"]:
            item = self.nodes[m.id]
            reference = item._sync_key[3]
            refreshed(item, lambda: item.update_from(m, model, reference_mass=reference))
            _synced(item, (m, model.kind, model.axis, reference))
        for a in anchors.values():
            item = self.nodes[a.id]
            normal = self._anchor_normal(model, a)
            refreshed(item, lambda: item.update_from(a, model, normal=normal))
            _synced(item, (a, model.kind, model.axis, normal))
        for link in links.values():
            item = self.links[link.id]
            a_item, b_item = self.nodes[link.a], self.nodes[link.b]
            refreshed(item, lambda: item.set_element(link, a_item, b_item))
            item._sync_key = (link, item.offset, id(a_item), a_item._sync_serial, id(b_item),
                              b_item._sync_serial)
        self._synced_model = model
        return touched

    def _anchor_normal(self, model, a):
        """The direction an anchor's hatching faces: towards the point its first link holds."""
        neighbour = self._anchor_link.get(a.id)
        if neighbour is None:
            return None
        link = model.element(neighbour)
        other, off = ((link.b, bodies.offset_of(link, "b")) if link.a == a.id
                      else (link.a, bodies.offset_of(link, "a")))
        node, (ox, oy) = model.find(other), off
        return normal_towards(a, dataclasses.replace(node, x=node.x + ox, y=node.y + oy)
                              if (ox, oy) != bodies.ORIGIN else node)

    def place_labels(self) -> None:
        """Put every label clear of the symbols and of the labels placed before it (masses,
        then anchors, then springs and dashpots); a label with no clear spot is hidden (the
        element's tooltip still names it). Scene units, so it holds at every zoom."""
        nodes = list(self.nodes.values())
        links = list(self.links.values())
        # a slider step changes a value, not the drawing: nothing to place again (an item
        # refreshed since has put its label back where it likes it: the key sees that)
        def state():
            return tuple((i.element_id, i.pos().x(), i.pos().y(), i.label_item.text(),
                          i.label_item.pos().x(), i.label_item.pos().y(),
                          i.symbol_rect().width()) for i in nodes + links)

        now = state()
        if now == getattr(self, "_labels_key", None):
            return
        # the drawing without the labels' own places (an item left alone keeps the place it
        # was given, one refreshed puts its label back where it likes it: either way the same
        # drawing, and a place found for it before is as good)
        drawing = tuple(s[:4] + s[6:] for s in now)
        memos = self.__dict__.setdefault("_labels_memo", [])
        found = next((places for key, places in memos if key == drawing), None)
        if found is not None:
            # a drawing placed before (a value edited, a move undone): the same places,
            # without the search
            for item, (visible, pos) in zip(nodes + links, found):
                item.label_item.setVisible(visible)
                item.label_item.setPos(pos)
        else:
            self._place_labels(nodes, links)
            memos.insert(0, (drawing, [(i.label_item.isVisible(), QPointF(i.label_item.pos()))
                                   for i in nodes + links]))
            del memos[4:]
        self._labels_key = state()

    def _place_labels(self, nodes, links) -> None:
        from app.drawing.labels import LabelPlacer, around_boxes, segment_boxes, shifted_boxes

        line = max((it.label_item.boundingRect().height() for it in nodes + links), default=14.0)
        placer = LabelPlacer(line)
        for item in nodes:
            placer.block(item.mapRectToScene(item.symbol_rect()))
        for link in links:
            p1, p2 = link.endpoints()
            for box in segment_boxes(p1, p2, 7.0):
                placer.block(box)
        gap = placer.pad + 2
        items, requests = [], []
        for item in [n for n in nodes if isinstance(n, MassItem)] + \
                [n for n in nodes if not isinstance(n, MassItem)] + links:
            label = item.label_item
            if not label.text():
                label.setVisible(False)
                continue
            br = label.boundingRect()
            w, h = br.width(), br.height()
            preferred = label.mapRectToScene(br)   # where the item itself put it
            if isinstance(item, LinkItem):
                p1, p2 = item.endpoints()
                mid = QPointF((p1.x() + p2.x()) / 2, (p1.y() + p2.y()) / 2)
                symbol = QRectF(mid.x() - 7, mid.y() - 7, 14, 14)
                cands = shifted_boxes(preferred, h) + around_boxes(symbol, w, h, gap)
            else:
                symbol = item.mapRectToScene(item.symbol_rect())
                cands = [preferred.getRect()] + around_boxes(symbol, w, h, gap)
            items.append(item)
            requests.append((label.text(), cands))
        # every label's candidates tested against the symbols in one pass, then placed in order
        for item, rect in zip(items, placer.place_all(requests)):
            label = item.label_item
            label.setVisible(rect is not None)
            if rect is not None:
                label.setPos(label.parentItem().mapFromScene(rect.topLeft()))

    def _sync(self, model) -> None:
        positive = [m.mass for m in model.masses if m.mass > 0]
        reference = (sum(positive) / len(positive)) if positive else 1.0
        node_ids = {m.id for m in model.masses} | {a.id for a in model.anchors}
        for gone in set(self.nodes) - node_ids:
            self.removeItem(self.nodes.pop(gone))
        link_ids = {s.id for s in model.springs} | {d.id for d in model.dampers} | \
            {g.id for g in model.gears}
        for gone in set(self.links) - link_ids:
            self.removeItem(self.links.pop(gone))
        for m in model.masses:
            item = self.nodes.get(m.id)
            if not isinstance(item, MassItem):
                if item is not None:
                    self.removeItem(item)
                item = MassItem(m, model, self.mapper)
                item.remove_requested.connect(lambda eid: self.document.remove([eid]))
                self.addItem(item)
                self.nodes[m.id] = item
            key = (m, model.kind, model.axis, reference)
            if bodies.is_body(model, m):   # its box, rings and elastic centre
                key += (tuple(bodies.mount_points(model).get(m.id, ())),
                        bodies.elastic_centre(model, m.id),
                        bodies.coupling_statement(model, m.id), self.mapper)
            if _stale(item, key):   # unchanged items are left alone (a slider step on 200 masses)
                item.update_from(m, model, reference_mass=reference)
                _synced(item, key)
        neighbours: dict[str, tuple] = {}
        first_link: dict[str, str] = {}
        for link in model.springs + model.dampers:
            # the point the anchor holds: a mount point of a body, else the node itself
            neighbours.setdefault(link.a, (link.b, bodies.offset_of(link, "b")))
            neighbours.setdefault(link.b, (link.a, bodies.offset_of(link, "a")))
            first_link.setdefault(link.a, link.id)
            first_link.setdefault(link.b, link.id)
        # for the fast path (_sync_changed_only): the links at each node, the anchor whose
        # hatching faces each node, the link that sets each anchor's facing
        anchor_ids = {a.id for a in model.anchors}
        self._anchor_link = {a: first_link[a] for a in anchor_ids if a in first_link}
        self._anchor_of = {}
        for a, (other, _off) in neighbours.items():
            if a in anchor_ids:
                self._anchor_of.setdefault(other, []).append(a)
        self._adjacency = {}
        for link in model.springs + model.dampers + model.gears:
            self._adjacency.setdefault(link.a, []).append(link.id)
            self._adjacency.setdefault(link.b, []).append(link.id)
        for a in model.anchors:
            other = neighbours.get(a.id)
            if other:
                node, (ox, oy) = model.node(other[0]), other[1]
                normal = normal_towards(a, dataclasses.replace(node, x=node.x + ox,
                                                               y=node.y + oy)
                                        if (ox, oy) != bodies.ORIGIN else node)
            else:
                normal = None
            item = self.nodes.get(a.id)
            if not isinstance(item, AnchorItem):
                if item is not None:
                    self.removeItem(item)
                item = AnchorItem(a, model, self.mapper)
                item.remove_requested.connect(lambda eid: self.document.remove([eid]))
                self.addItem(item)
                self.nodes[a.id] = item
            key = (a, model.kind, model.axis, normal)
            if _stale(item, key):
                item.update_from(a, model, normal=normal)
                _synced(item, key)
        pairs: dict[tuple, list[str]] = {}
        for link in model.springs + model.dampers + model.gears:
            pairs.setdefault(bodies.link_key(link), []).append(link.id)
        for link in model.springs + model.dampers + model.gears:
            cls = SpringItem if isinstance(link, Spring) else \
                GearItem if isinstance(link, Gear) else DashpotItem
            item = self.links.get(link.id)
            a_item, b_item = self.nodes[link.a], self.nodes[link.b]
            key = bodies.link_key(link)
            group = pairs[key]
            i = group.index(link.id)
            offset = (i - (len(group) - 1) / 2) * _PARALLEL_GAP
            if (link.a, bodies.offset_of(link, "a")) != key[0]:
                offset = -offset   # same side whichever way the link was drawn
            if not isinstance(item, cls):
                if item is not None:
                    self.removeItem(item)
                item = cls(link, a_item, b_item)
                item.remove_requested.connect(lambda eid: self.document.remove([eid]))
                self.addItem(item)
                self.links[link.id] = item
            key = (link, offset, id(a_item), a_item._sync_serial, id(b_item), b_item._sync_serial)
            if getattr(item, "_sync_key", None) != key or a_item.pos() != a_item._sync_pos \
                    or b_item.pos() != b_item._sync_pos:
                item.offset = offset
                item.set_element(link, a_item, b_item)
                item._sync_key = key
        self._synced_model = model

    def restyle(self) -> None:
        """Redraw every item with the current palette (a light/dark switch)."""
        for item in list(self.nodes.values()) + list(self.links.values()):
            item._sync_key = None
        self._synced_model = None
        self._on_model_change(self.document.model)
        if self._kb_cursor is not None:
            pen = self._kb_cursor.pen()
            pen.setColor(current_style().accent)
            self._kb_cursor.setPen(pen)

    def _update_scene_rect(self):
        # from the nodes' positions, not itemsBoundingRect(): that asks every item (a Python
        # boundingRect each) on every edit; symbols and labels reach a few dozen px beyond
        # their node, well inside the 3000 px of room given round the model
        points = [item.pos() for item in self.nodes.values()]
        if points:
            xs, ys = [p.x() for p in points], [p.y() for p in points]
            rect = QRectF(min(xs), min(ys), max(xs) - min(xs), max(ys) - min(ys))
            rect = rect.adjusted(-100, -100, 100, 100)
        else:
            rect = QRectF(-200, -200, 400, 400)
        self.setSceneRect(rect.adjusted(-3000, -3000, 3000, 3000))

    def node_item_moved(self, item: NodeItem) -> None:
        """A node is being dragged: keep the links attached to it on its preview position."""
        for link in self.links.values():
            if link.a_item is item or link.b_item is item:
                link.refresh()

    # -- selection ----------------------------------------------------------------------------
    def selected_ids(self) -> list[str]:
        ids = [i.element_id for i in self.selectedItems()
               if isinstance(i, (NodeItem, LinkItem))]
        order = {eid: n for n, eid in enumerate(list(self.nodes) + list(self.links))}
        return sorted(ids, key=lambda e: order.get(e, 0))

    def select_ids(self, ids) -> None:
        ids = set(ids)
        self._syncing = True
        try:
            for eid, item in list(self.nodes.items()) + list(self.links.items()):
                item.setSelected(eid in ids)
        finally:
            self._syncing = False
        self._on_selection_change()

    def select_all(self) -> None:
        self.select_ids(list(self.nodes) + list(self.links))

    def _on_selection_change(self):
        if not self._syncing:
            self.selection_ids_changed.emit(self.selected_ids())

    # -- edit actions -------------------------------------------------------------------------
    def delete_selection(self) -> bool:
        ids = self.selected_ids()
        if not ids:
            self.status_message.emit("Nothing selected to delete")
            return False
        return self.document.remove(ids)

    def copy_selection(self) -> int:
        """Keep copies of the selected elements (and links between selected nodes) for paste."""
        model = self.document.model
        ids = set(self.selected_ids())
        nodes = [el for el in model.masses + model.anchors if el.id in ids]
        node_ids = {n.id for n in nodes}
        links = [el for el in model.springs + model.dampers
                 if el.id in ids or (el.a in node_ids and el.b in node_ids)]
        self._clipboard = tuple(nodes + links)
        self._paste_count = 0
        if self._clipboard:
            self.status_message.emit(f"Copied {len(self._clipboard)} element(s)")
        return len(self._clipboard)

    def paste(self) -> list[str]:
        if not self._clipboard:
            self.status_message.emit("Nothing copied to paste")
            return []
        self._paste_count += 1
        step = 2 * self.mapper.grid_m * self._paste_count
        try:
            new_ids = self.document.paste(self._clipboard, offset=(step, -step))
        except ModelError as exc:
            self.status_message.emit(f"Paste refused: {exc}")
            return []
        self.select_ids(new_ids)
        return new_ids

    # -- mouse --------------------------------------------------------------------------------
    def node_at(self, pos: QPointF, exclude: str | None = None) -> NodeItem | None:
        for item in self.items(pos):
            if isinstance(item, NodeItem) and item.element_id != exclude:
                return item
            parent = item.parentItem()
            if isinstance(parent, NodeItem) and parent.element_id != exclude:
                return parent
        return None

    def mousePressEvent(self, event):  # noqa: N802
        if event.button() != Qt.LeftButton or self.mode == Mode.SELECT:
            super().mousePressEvent(event)
            if event.button() == Qt.LeftButton:
                grabber = self.mouseGrabberItem()
                self._mount_drag = grabber if isinstance(grabber, MountItem) else None
                self._press_positions = {eid: QPointF(item.pos())
                                         for eid, item in self.nodes.items() if item.isSelected()}
            return
        pos = event.scenePos()
        if self.mode in (Mode.PLACE_MASS, Mode.PLACE_ANCHOR, Mode.PLACE_BODY):
            self._place_at(pos)
            event.accept()
            return
        node = self.node_at(pos)
        if node is None:
            self.status_message.emit("Start the drag on a mass or an anchor")
            event.accept()
            return
        self._start_connect(node, pos)
        event.accept()

    def _place_at(self, pos: QPointF) -> str | None:
        """Place a mass or an anchor (by the mode) at a scene point; the new id or None."""
        x, y = self.mapper.snapped_model(pos, self.snap)
        try:
            if self.mode == Mode.PLACE_MASS:
                new_id = self.document.add_mass(x, y)
            elif self.mode == Mode.PLACE_BODY:
                new_id = self.document.model.new_id("m")
                mass, inertia = NEW_BODY
                self.document.add([Mass(id=new_id, x=x, y=y, mass=mass, inertia=inertia)],
                                  text=f"Add rigid body {new_id}")
            else:
                new_id = self.document.add_anchor(x, y)
        except ModelError as exc:
            self.status_message.emit(f"Not placed: {exc}")
            return None
        self.select_ids([new_id])
        from app.text.units import show

        self.status_message.emit(f"Placed {self.document.model.element(new_id).label} at"
                                 f" x {show(x, 'length', self.unit_system)},"
                                 f" y {show(y, 'length', self.unit_system)}")
        return new_id

    def attach_offset(self, node: NodeItem, pos: QPointF) -> tuple[float, float]:
        """Where a link ending at scene point ``pos`` on ``node`` attaches: (0, 0), the centre,
        except on a rigid body: the mount point under ``pos``, or the point itself (m, body
        frame, on the grid from the centre when snapping)."""
        if not getattr(node, "is_body", False) or self.mode == Mode.CONNECT_GEAR:
            return bodies.ORIGIN
        for item in self.items(pos):
            if isinstance(item, MountItem) and item.body_item is node:
                return item.offset
        local = node.mapFromScene(pos)
        k = self.mapper.px_per_m
        x, y = local.x() / k, -local.y() / k
        if self.snap:
            g = self.mapper.grid_m
            x, y = round(x / g) * g, round(y / g) * g
        return (round(x, 9) + 0.0, round(y, 9) + 0.0)

    def _start_connect(self, node: NodeItem, pos: QPointF) -> None:
        self._cancel_connect()          # one connection at a time (a click during a keyboard one)
        self._connect_from = node.element_id
        self._connect_offset = self.attach_offset(node, pos)
        start = node.attach_scene_point(self._connect_offset) \
            if self._connect_offset != bodies.ORIGIN else node.pos()
        self._preview = QGraphicsLineItem(QLineF(start, pos))
        pen = QPen(current_style().accent, 1.5, Qt.DashLine)
        pen.setCosmetic(True)
        self._preview.setPen(pen)
        self._preview.setZValue(5)
        self.addItem(self._preview)

    def _finish_connect(self, target: NodeItem | None, pos: QPointF | None = None
                        ) -> str | None:
        """End a connection on ``target`` at scene point ``pos`` (None: nothing added); the
        new link's id or None."""
        source, source_offset = self._connect_from, self._connect_offset
        what = {Mode.CONNECT_SPRING: "spring", Mode.CONNECT_GEAR: "gear stage"}.get(
            self.mode, "dashpot")
        target_offset = self.attach_offset(target, pos) \
            if target is not None and pos is not None else bodies.ORIGIN
        self._cancel_connect()
        if target is None or source is None:
            where = "disc" if self.mode == Mode.CONNECT_GEAR else "mass or anchor"
            self.status_message.emit(f"No {what} added: end on a second {where}")
            return None
        b = target.element_id
        try:
            if self.mode == Mode.CONNECT_GEAR or source_offset != bodies.ORIGIN \
                    or target_offset != bodies.ORIGIN:
                new_id = self._connect_element(what, source, b, source_offset, target_offset)
            else:
                new_id = self.document.connect(what, source, b)
        except ModelError as exc:
            self.status_message.emit(f"No {what} added: {exc}")
            return None
        self.select_ids([new_id])
        self.status_message.emit(f"Added {what} {new_id}: {source}–{b}")
        return new_id

    def _connect_element(self, what, a, b, a_offset, b_offset) -> str:
        """A new spring, dashpot (attached at offsets) or gear stage as one undo entry."""
        from app.document import commands
        from app.document.document import DEFAULT_DAMPING, DEFAULT_STIFFNESS

        model = self.document.model
        if what == "gear stage":
            el = Gear(id=model.new_id("n"), a=a, b=b, ratio=NEW_GEAR_RATIO)
        elif what == "spring":
            el = Spring(id=model.new_id("s"), a=a, b=b, k=DEFAULT_STIFFNESS[model.kind],
                        a_offset=a_offset, b_offset=b_offset)
        else:
            el = Damper(id=model.new_id("c"), a=a, b=b, c=DEFAULT_DAMPING[model.kind],
                        a_offset=a_offset, b_offset=b_offset)
        self.document.apply(model.with_changes(put=[el]), f"Connect {a}–{b} with {what} {el.id}",
                            command_class=commands.ConnectCommand)
        return el.id

    def _finish_mount_drag(self, ring: MountItem) -> bool:
        """A mount point let go: every attachment at its offset on that body moves to where it
        was dropped, as one undo entry; a refusal puts the ring back and says why."""
        if not ring.moved():
            return False
        from app.document import commands

        model = self.document.model
        old, new = ring.offset, ring.dragged_offset()
        put = []
        for link in model.springs + model.dampers:
            changes = {f"{end}_offset": new for end in ("a", "b")
                       if getattr(link, end) == ring.body_id
                       and bodies.offset_of(link, end) == old}
            if changes:
                put.append(dataclasses.replace(link, **changes))
        body = model.element(ring.body_id)
        try:
            if not put:
                raise ModelError(f"mount point of {body.label}: nothing is attached there")
            self.document.apply(model.with_changes(put=put),
                                f"Move mount point of {body.label}",
                                command_class=commands.MoveCommand)
        except ModelError as exc:
            ring.put_back()
            self.node_item_moved(ring.body_item)
            self.status_message.emit(f"Mount point not moved: {exc}")
            return False
        from app.text.units import show

        self.status_message.emit(
            f"Mount point of {body.label} moved to dx {show(new[0], 'length', self.unit_system)},"
            f" dy {show(new[1], 'length', self.unit_system)} ({len(put)} attachment(s))")
        return True

    def mouseMoveEvent(self, event):  # noqa: N802
        if self._preview is not None:
            line = self._preview.line()
            self._preview.setLine(QLineF(line.p1(), event.scenePos()))
            event.accept()
            return
        super().mouseMoveEvent(event)

    def mouseReleaseEvent(self, event):  # noqa: N802
        if self._connect_from is not None and not self._kb_connecting:
            target = self.node_at(event.scenePos(), exclude=self._connect_from)
            self._finish_connect(target, event.scenePos())
            event.accept()
            return
        super().mouseReleaseEvent(event)
        ring, self._mount_drag = self._mount_drag, None
        if ring is not None:
            self._finish_mount_drag(ring)
        if self._press_positions:
            self._finish_move()
        self._press_positions = None

    def _finish_move(self):
        moved = {}
        for eid, before in self._press_positions.items():
            item = self.nodes.get(eid)
            if item is not None and item.pos() != before:
                moved[eid] = self.mapper.snapped_model(item.pos(), snap=False)
        if not moved:
            return
        try:
            self.document.move_nodes(moved, merge_key=("drag", id(self._press_positions)))
        except ModelError as exc:
            self.status_message.emit(f"Move refused: {exc}")
            self._on_model_change(self.document.model)  # put the items back

    def _cancel_connect(self):
        if self._preview is not None:
            self.removeItem(self._preview)
        self._preview = None
        self._connect_from = None
        self._connect_offset = bodies.ORIGIN
        self._kb_connecting = False

    # -- keyboard -----------------------------------------------------------------------------
    # Every mouse gesture has a keyboard form. In the place and connect tools a cross-hair
    # cursor moves by one grid step per arrow key (five with Shift) and Tab jumps it from node to
    # node; Enter places a mass or anchor there, or starts and then ends a connection on the node
    # under it. In the select tool, arrows nudge the selected masses and anchors (one undo entry
    # per press) and Tab walks the selection through the elements.
    def keyboard_cursor(self) -> QPointF | None:
        """Scene position of the keyboard cross-hair, None while it is hidden."""
        item = self._kb_cursor
        return QPointF(item.pos()) if item is not None and item.isVisible() else None

    def _show_cursor(self, pos: QPointF | None = None) -> QPointF:
        if self._kb_cursor is None:
            path = QPainterPath()
            for a, b in (((-9, 0), (-3, 0)), ((3, 0), (9, 0)), ((0, -9), (0, -3)),
                         ((0, 3), (0, 9))):
                path.moveTo(*a)
                path.lineTo(*b)
            path.addEllipse(QPointF(0, 0), 3, 3)
            item = QGraphicsPathItem(path)
            pen = QPen(current_style().accent, 2)
            pen.setCosmetic(True)
            item.setPen(pen)
            item.setZValue(30)
            item.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIgnoresTransformations)
            self.addItem(item)
            self._kb_cursor = item
        if pos is None:
            if self._kb_cursor.isVisible() and self._kb_cursor.scene() is self:
                pos = self._kb_cursor.pos()
            else:
                sel = [self.nodes[e] for e in self.selected_ids() if e in self.nodes]
                if sel:
                    pos = sel[0].pos()
                elif self.views():
                    v = self.views()[0]
                    pos = v.mapToScene(v.viewport().rect().center())
                else:
                    pos = QPointF(0, 0)
                pos = self.mapper.snap_scene(pos) if self.snap else pos
        self._kb_cursor.setPos(pos)
        self._kb_cursor.show()
        if self._preview is not None:
            line = self._preview.line()
            self._preview.setLine(QLineF(line.p1(), pos))
        for v in self.views():
            v.ensureVisible(QRectF(pos.x() - 20, pos.y() - 20, 40, 40))
        return pos

    def _hide_cursor(self):
        if self._kb_cursor is not None:
            self._kb_cursor.hide()

    def _ordered_nodes(self) -> list[NodeItem]:
        """Masses and anchors in reading order (left to right, then top to bottom)."""
        model = self.document.model
        nodes = sorted(model.masses + model.anchors, key=lambda n: (round(n.x, 9), -n.y))
        return [self.nodes[n.id] for n in nodes if n.id in self.nodes]

    def cycle(self, forward: bool = True) -> bool:
        """Tab: the next element (select tool) or node (other tools). False past the last one,
        so focus can move on to the next widget."""
        if self.mode == Mode.SELECT:
            m = self.document.model
            order = [n.element_id for n in self._ordered_nodes()] + \
                [e.id for e in m.springs + m.dampers if e.id in self.links]
            sel = self.selected_ids()
        else:
            order = [n.element_id for n in self._ordered_nodes()]
            here = self.keyboard_cursor()
            at = self.node_at(here) if here is not None else None
            sel = [at.element_id] if at is not None else []
        if not order:
            return False
        if sel and sel[0] in order:
            i = order.index(sel[0]) + (1 if forward else -1)
            if not 0 <= i < len(order):
                if self.mode == Mode.SELECT:
                    return False          # let focus move on to the next panel
                i %= len(order)           # a tool is active: go round (Esc leaves it)
        else:
            i = 0 if forward else len(order) - 1
        eid = order[i]
        if self.mode == Mode.SELECT:
            self.select_ids([eid])
            el = self.document.model.element(eid)
            self.status_message.emit(f"Selected {el.label} ({eid})")
            for v in self.views():
                item = self.nodes.get(eid) or self.links.get(eid)
                v.ensureVisible(item.sceneBoundingRect())
        else:
            self._show_cursor(self.nodes[eid].pos())
            self.status_message.emit(f"At {self.document.model.element(eid).label} ({eid}):"
                                     " Enter to use it")
        return True

    def _nudge(self, dx: int, dy: int, steps: int) -> bool:
        ids = [e for e in self.selected_ids() if e in self.nodes]
        if not ids:
            return False
        model = self.document.model
        g = self.mapper.grid_m * steps
        moved = {}
        for eid in ids:
            el = model.element(eid)
            moved[eid] = (round(el.x + dx * g, 9), round(el.y + dy * g, 9))
        try:
            self._nudges += 1
            self.document.move_nodes(moved, merge_key=("nudge", self._nudges))  # one per press
        except ModelError as exc:
            self.status_message.emit(f"Move refused: {exc}")
            return True
        self.status_message.emit(f"Moved {len(ids)} node(s) by {dx * g:+.4g} m, {dy * g:+.4g} m")
        return True

    def _enter(self) -> None:
        pos = self.keyboard_cursor()
        if pos is None:
            self._show_cursor()
            self.status_message.emit("Arrow keys or Tab move the cross-hair; Enter again to act")
            return
        if self.mode in (Mode.PLACE_MASS, Mode.PLACE_ANCHOR, Mode.PLACE_BODY):
            self._place_at(pos)
            return
        node = self.node_at(pos, exclude=self._connect_from)
        if self._connect_from is None:
            if node is None:
                self.status_message.emit("Move the cross-hair onto a mass or an anchor (Tab)")
                return
            self._start_connect(node, pos)
            self._kb_connecting = True
            self.status_message.emit(f"From {node.element_id}: move to a second node and press"
                                     " Enter (Esc cancels)")
        else:
            self._finish_connect(node, pos)

    def keyPressEvent(self, event):  # noqa: N802
        key = event.key()
        if key == Qt.Key_Escape:
            if self._connect_from is not None:
                self._cancel_connect()
                self.status_message.emit("Connection cancelled")
            elif self.mode != Mode.SELECT:
                self._hide_cursor()
                self.set_mode(Mode.SELECT)
            else:
                self.select_ids([])        # Esc in Select: nothing selected, Tab starts over
            event.accept()
            return
        arrows = {Qt.Key_Left: (-1, 0), Qt.Key_Right: (1, 0), Qt.Key_Up: (0, 1),
                  Qt.Key_Down: (0, -1)}
        if key in arrows:
            dx, dy = arrows[key]   # model directions: y up
            steps = 5 if event.modifiers() & Qt.ShiftModifier else 1
            if self.mode == Mode.SELECT:
                if self._nudge(dx, dy, steps):
                    event.accept()
                    return
                super().keyPressEvent(event)
                return
            here = self.keyboard_cursor()
            if here is None:
                self._show_cursor()
            else:
                g = self.mapper.grid_m * self.mapper.px_per_m * steps
                self._show_cursor(QPointF(here.x() + dx * g, here.y() - dy * g))
            event.accept()
            return
        if key in (Qt.Key_Return, Qt.Key_Enter) and self.mode != Mode.SELECT:
            self._enter()
            event.accept()
            return
        super().keyPressEvent(event)

    # -- look ---------------------------------------------------------------------------------
    def drawBackground(self, painter, rect):  # noqa: N802
        st = current_style()
        painter.fillRect(rect, st.background)
        g = self.mapper.grid_m * self.mapper.px_per_m
        # Minor grid every snap step, a stronger line every metre; skip minor when zoomed far out.
        scale = painter.transform().m11() or 1.0
        pen = QPen(st.grid, 0)
        painter.setPen(pen)
        if g * scale >= 6:
            left = int(rect.left() // g) * g
            top = int(rect.top() // g) * g
            x = left
            lines = []
            while x < rect.right():
                lines.append(QLineF(x, rect.top(), x, rect.bottom()))
                x += g
            y = top
            while y < rect.bottom():
                lines.append(QLineF(rect.left(), y, rect.right(), y))
                y += g
            c = st.grid
            c.setAlpha(90)
            painter.setPen(QPen(c, 0))
            aa = painter.testRenderHint(QPainter.RenderHint.Antialiasing)
            painter.setRenderHint(QPainter.RenderHint.Antialiasing, False)  # axis-aligned lines
            painter.drawLines(lines)
            painter.setRenderHint(QPainter.RenderHint.Antialiasing, aa)
        painter.setPen(QPen(st.grid, 0))
        painter.drawLine(QLineF(rect.left(), 0, rect.right(), 0))
        painter.drawLine(QLineF(0, rect.top(), 0, rect.bottom()))


def _stale(item, key) -> bool:
    """True when a node item must be refreshed: its element (or what its drawing depends on)
    changed, or it is not where its last refresh put it (a drag preview the model refused)."""
    return getattr(item, "_sync_key", None) != key or item.pos() != item._sync_pos


def _synced(item, key) -> None:
    item._sync_key = key
    item._sync_pos = item.pos()
    item._sync_serial = getattr(item, "_sync_serial", 0) + 1


__all__ = ["ModelScene", "Mode", "MODE_INFO"]
