"""Fixtures of the limits tests: JointTrajectory objects built by hand (no translate needed).

The motor side is computed with robots.actuator_limits (the DC-equivalent model of robots.robot):
current from tau, qd, qdd; voltage R I + Ke w_m; electrical power V I; mechanical power tau qd.
"""

from html.parser import HTMLParser

import numpy as np
import pytest

from legbridge.mapping.joint_trajectory import JointTrajectory
from legbridge.robots import actuator_limits as al


def _ro(a, dtype=float):
    out = np.array(a, dtype=dtype, copy=True)
    out.setflags(write=False)
    return out


def build_trajectory(robot, q, qd=None, qdd=None, tau=None, jacobian=None, force=None, stance=None, *,
                     rate_hz=1000.0, case="case", flags=None, ground_height_m=0.0):
    """A JointTrajectory from joint-side arrays; tau_free = tau + J^T F so tau = tau_free - J^T F."""
    q = np.atleast_2d(np.asarray(q, dtype=float))
    n, nj = q.shape
    z = np.zeros((n, nj))
    qd = z if qd is None else np.asarray(qd, dtype=float).reshape(n, nj)
    qdd = z if qdd is None else np.asarray(qdd, dtype=float).reshape(n, nj)
    tau = z if tau is None else np.asarray(tau, dtype=float).reshape(n, nj)
    jac = np.zeros((n, 2, nj)) if jacobian is None else np.broadcast_to(np.asarray(jacobian, dtype=float), (n, 2, nj))
    force = np.zeros((n, 2)) if force is None else np.broadcast_to(np.asarray(force, dtype=float), (n, 2))
    stance = np.ones(n, bool) if stance is None else np.broadcast_to(np.asarray(stance, bool), (n,))
    joints = robot.joints[:nj]
    cur = np.column_stack([al.current_a(j.actuator, tau[:, i], qd[:, i], qdd[:, i]) for i, j in enumerate(joints)])
    wm = np.column_stack([al.motor_speed_rad_s(j.actuator, qd[:, i]) for i, j in enumerate(joints)])
    volt = np.column_stack([al.terminal_voltage_v(j.actuator, cur[:, i], qd[:, i]) for i, j in enumerate(joints)])
    ratio = np.array([j.actuator.gear_ratio for j in joints])
    tau_free = tau + np.einsum("kri,kr->ki", jac, force)
    return JointTrajectory(
        case=case, ground_height_m=ground_height_m, joint_names=tuple(j.name for j in joints), rate_hz=rate_hz,
        time_s=_ro(np.arange(n) / rate_hz), stance=_ro(stance, bool), q=_ro(q), qd=_ro(qd), qdd=_ro(qdd),
        tau=_ro(tau), tau_free=_ro(tau_free), jacobian=_ro(jac), foot_force_n=_ro(force),
        base_residual=_ro(np.zeros((n, 3))), motor_position_rad=_ro(q * ratio), motor_speed_rad_s=_ro(wm),
        motor_torque_nm=_ro(tau / ratio), current_a=_ro(cur), voltage_v=_ro(volt),
        electrical_power_w=_ro(volt * cur), mechanical_power_w=_ro(tau * qd),
        flags=_ro(np.zeros(n, int) if flags is None else flags, int),
    )


def leg_jacobian(robot, q):
    """Foot Jacobian (n, 2, 2) of the planar two-segment leg, by hand (README conventions):
    foot x = -l1 sin q1 - l2 sin(q1+q2), z = -l1 cos q1 - l2 cos(q1+q2) relative to the hip."""
    q = np.atleast_2d(q)
    l1, l2 = robot.segments[0].length_m, robot.segments[1].length_m
    s1, c1 = np.sin(q[:, 0]), np.cos(q[:, 0])
    s12, c12 = np.sin(q[:, 0] + q[:, 1]), np.cos(q[:, 0] + q[:, 1])
    return np.stack([np.stack([-l1 * c1 - l2 * c12, -l2 * c12], -1), np.stack([l1 * s1 + l2 * s12, l2 * s12], -1)], 1)


@pytest.fixture(scope="session")
def make_traj():
    return build_trajectory


@pytest.fixture(scope="session")
def hand_jacobian():
    return leg_jacobian


class Doc(HTMLParser):
    """The one HTML reader of the report tests (Python's html.parser): ids in document order, the
    visible text, tables (by class) as rows of cell text, list items of <ol>/<ul> (by class), img
    attributes and every tag with its attributes."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.ids, self.text, self.tables, self.imgs, self.tags, self.lists = [], [], {}, [], [], {}
        self._table = None
        self._row = None
        self._cell = None
        self._list = None
        self._item = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append((tag, a))
        if "id" in a:
            self.ids.append(a["id"])
        if tag == "table":
            self._table = a.get("class", f"table{len(self.tables)}")
            self.tables[self._table] = []
        elif tag == "tr":
            self._row = []
        elif tag in ("td", "th"):
            self._cell = []
        elif tag == "img":
            self.imgs.append(a)
        elif tag in ("ol", "ul"):
            self._list = a.get("class", f"list{len(self.lists)}")
            self.lists[self._list] = []
        elif tag == "li" and self._list is not None:
            self._item = []

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._row is not None and self._cell is not None:
            self._row.append(" ".join("".join(self._cell).split()))
            self._cell = None
        elif tag == "tr" and self._table is not None and self._row is not None:
            self.tables[self._table].append(self._row)
            self._row = None
        elif tag == "table":
            self._table = None
        elif tag == "li" and self._item is not None:
            self.lists[self._list].append(" ".join("".join(self._item).split()))
            self._item = None
        elif tag in ("ol", "ul"):
            self._list = None

    def handle_data(self, data):
        self.text.append(data)
        if self._cell is not None:
            self._cell.append(data)
        if self._item is not None:
            self._item.append(data)


def parse(html: str) -> Doc:
    doc = Doc()
    doc.feed(html)
    doc.close()
    return doc


@pytest.fixture(scope="session")
def parse_html():
    """html text -> Doc (see Doc)."""
    return parse
