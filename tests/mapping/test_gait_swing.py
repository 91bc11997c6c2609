"""Biped leg assignment (mapping/gait.py) and the per-leg swing motion (mapping/swing.py).

Expected values come from outside the code under test: assignments and masks written out by hand
from the rules, closed-form derivatives of the test signals, a quintic polynomial the quintic Hermite
interpolant must reproduce, and central finite differences.
"""

from types import MappingProxyType

import numpy as np
import pytest

from legbridge.mapping.gait import GAIT_KINDS, LEGS, Gait, LegPhases, assign_legs, parse_gait
from legbridge.mapping.swing import LegChannel, clearance_bump, hermite5, leg_motions
from legbridge.robots.errors import PlanFormatError

# F S F S F S F: flight, three stances with flights between, flight (12 samples).
THREE = np.array([0, 1, 1, 0, 0, 1, 1, 1, 0, 1, 1, 0], dtype=bool)


def runs_of(mask):
    """(first, last + 1) of each run of True, by a plain scan (independent of the module's own helper)."""
    out, k, n = [], 0, len(mask)
    while k < n:
        if mask[k]:
            a = k
            while k < n and mask[k]:
                k += 1
            out.append((a, k))
        else:
            k += 1
    return out


# ---------------------------------------------------------------------------------------------------
# gait.py


def test_alternating_left_first_by_hand():
    ph = assign_legs(THREE, Gait("alternating", "left"))
    # hand: phases 0 (samples 1-2), 1 (5-7), 2 (9-10); left takes 0 and 2, right takes 1
    np.testing.assert_array_equal(ph.stance_index, [-1, 0, 0, -1, -1, 1, 1, 1, -1, 2, 2, -1])
    np.testing.assert_array_equal(ph.stance_leg, [-1, 0, 0, -1, -1, 1, 1, 1, -1, 0, 0, -1])
    np.testing.assert_array_equal(ph.contact["left"], np.array([0, 1, 1, 0, 0, 0, 0, 0, 0, 1, 1, 0], bool))
    np.testing.assert_array_equal(ph.contact["right"], np.array([0, 0, 0, 0, 0, 1, 1, 1, 0, 0, 0, 0], bool))
    np.testing.assert_array_equal(ph.runs, [[1, 3], [5, 8], [9, 11]])
    assert ph.stance_leg.dtype == np.int8
    # hand: the export text of each leg
    S, W = "stance", "swing"
    assert ph.phase_text("left").tolist() == [W, S, S, W, W, W, W, W, W, S, S, W]
    assert ph.phase_text("right").tolist() == [W, W, W, W, W, S, S, S, W, W, W, W]
    for a in (ph.stance_leg, ph.stance_index, ph.runs, ph.contact["left"], ph.contact["right"]):
        assert not a.flags.writeable
    assert isinstance(ph.contact, MappingProxyType)


def test_alternating_right_first_by_hand():
    ph = assign_legs(THREE, Gait("alternating", "right"))
    # hand: right takes phases 0 and 2, left takes phase 1
    np.testing.assert_array_equal(ph.stance_leg, [-1, 1, 1, -1, -1, 0, 0, 0, -1, 1, 1, -1])
    np.testing.assert_array_equal(ph.contact["right"], np.array([0, 1, 1, 0, 0, 0, 0, 0, 0, 1, 1, 0], bool))
    np.testing.assert_array_equal(ph.contact["left"], np.array([0, 0, 0, 0, 0, 1, 1, 1, 0, 0, 0, 0], bool))


def test_same_leg_by_hand():
    ph = assign_legs(THREE, Gait("same-leg", "right", held_leg_angle_rad=0.2, held_leg_length_m=0.7))
    # hand: right takes every phase, left is never in contact and is "held" at every sample
    np.testing.assert_array_equal(ph.stance_leg, [-1, 1, 1, -1, -1, 1, 1, 1, -1, 1, 1, -1])
    np.testing.assert_array_equal(ph.contact["right"], THREE)
    np.testing.assert_array_equal(ph.contact["left"], np.zeros(12, bool))
    assert ph.phase_text("left").tolist() == ["held"] * 12
    assert ph.phase_text("right").tolist() == ["stance" if x else "swing" for x in THREE.tolist()]


def test_both_by_hand():
    ph = assign_legs(THREE, Gait("both"))
    # hand: code 2 in every stance sample, both legs in contact there
    np.testing.assert_array_equal(ph.stance_leg, [-1, 2, 2, -1, -1, 2, 2, 2, -1, 2, 2, -1])
    np.testing.assert_array_equal(ph.contact["left"], THREE)
    np.testing.assert_array_equal(ph.contact["right"], THREE)


def test_plan_starting_and_ending_in_stance_and_integer_phase():
    # hand: S S F S F F S -> phases 0 (0-1), 1 (3), 2 (6); 0/1 integers are read as bool
    ph = assign_legs([1, 1, 0, 1, 0, 0, 1], Gait())
    np.testing.assert_array_equal(ph.stance_index, [0, 0, -1, 1, -1, -1, 2])
    np.testing.assert_array_equal(ph.stance_leg, [0, 0, -1, 1, -1, -1, 0])
    ph = assign_legs(np.zeros(4, bool), Gait())  # all flight: no phase at all
    np.testing.assert_array_equal(ph.stance_leg, [-1, -1, -1, -1])
    assert ph.runs.shape == (0, 2)


@pytest.mark.parametrize("bad", [[0, 2, 1], [[True, False]], [], ["a", "b"]])
def test_assign_legs_refuses_bad_phase(bad):
    with pytest.raises(PlanFormatError, match="expected"):
        assign_legs(bad, Gait())


@pytest.mark.parametrize("text, kind, leg", [
    ("alternating", "alternating", "left"), ("alternating:left", "alternating", "left"),
    ("alternating:right", "alternating", "right"), ("same-leg", "same-leg", "left"),
    ("same-leg:left", "same-leg", "left"), ("same-leg:right", "same-leg", "right"), ("both", "both", "left"),
    ("  Alternating:RIGHT ", "alternating", "right"),
])
def test_parse_gait_accepts(text, kind, leg):
    g = parse_gait(text)
    assert (g.kind, g.first_leg) == (kind, leg)
    assert g.held_leg_length_m is None and g.held_leg_angle_rad == 0.0


@pytest.mark.parametrize("text", ["", "hop", "both:left", "alternating:middle", "same-leg:", "left",
                                  "alternating,right", None, 3])
def test_parse_gait_refuses(text):
    with pytest.raises(PlanFormatError) as err:
        parse_gait(text)
    msg = str(err.value)
    # the message names every accepted form and what was found
    for form in ("'alternating'", "'alternating:right'", "'same-leg:left'", "'both'"):
        assert form in msg
    assert f"found {text!r}" in msg if isinstance(text, str) else f"found {text}" in msg


def test_gait_validation_and_describe():
    with pytest.raises(PlanFormatError, match=r"'gait'.*expected one of 'alternating', 'same-leg', 'both'"):
        Gait(kind="hop")
    with pytest.raises(PlanFormatError, match=r"'gait\.first_leg'.*expected one of 'left', 'right', found 'middle'"):
        Gait(first_leg="middle")
    with pytest.raises(PlanFormatError, match=r"gait\.held_leg_length_m"):
        Gait("same-leg", held_leg_length_m=-0.5)
    with pytest.raises(PlanFormatError, match=r"gait\.held_leg_angle_rad"):
        Gait("same-leg", held_leg_angle_rad=float("nan"))
    assert GAIT_KINDS == ("alternating", "same-leg", "both") and LEGS == ("left", "right")
    assert Gait().describe() == "alternating legs, left first"
    assert Gait("alternating", "right").describe() == "alternating legs, right first"
    assert Gait("both").describe() == "both legs together, ground force shared equally"
    assert Gait("same-leg", "left", 0.25, 0.8).describe() == (
        "same leg: left takes every stance, right held at 0.25 rad and 0.8 m")
    assert "nominal" in Gait("same-leg").describe()


# ---------------------------------------------------------------------------------------------------
# swing.py: test plans


def jittered_time(n, dt):
    """Strictly increasing, non-uniform: steps dt (1 + 0.3 (sin(k+1) - sin k)) >= 0.4 dt."""
    k = np.arange(n)
    return k * dt + 0.3 * dt * np.sin(k)


def three_stance_plan(dt=1e-3):
    """F S F S F S F on a jittered grid; angle and length smooth closed-form signals."""
    t = jittered_time(round(1.15 / dt), dt)
    stance = ((t >= 0.10) & (t < 0.30)) | ((t >= 0.45) & (t < 0.65)) | ((t >= 0.80) & (t < 1.00))
    w1, w2 = 2 * np.pi * 1.3, 2 * np.pi * 2.1
    # d/dt sin = cos, d/dt cos = -sin (calculus)
    angle = LegChannel(0.35 * np.sin(w1 * t + 0.4), 0.35 * w1 * np.cos(w1 * t + 0.4),
                       -0.35 * w1 ** 2 * np.sin(w1 * t + 0.4))
    length = LegChannel(0.9 - 0.06 * np.cos(w2 * t), 0.06 * w2 * np.sin(w2 * t), 0.06 * w2 ** 2 * np.cos(w2 * t))
    return t, stance, length, angle


def flight_run_before(stance, a):
    """First sample of the plan's flight run that ends at touchdown sample a (scan backwards by hand)."""
    k = a
    while k > 0 and not stance[k - 1]:
        k -= 1
    return k


@pytest.mark.parametrize("first", LEGS)
def test_touchdown_landing_flight_and_stance_follow_plan(first):
    t, stance, length, angle = three_stance_plan()
    ph = assign_legs(stance, Gait("alternating", first))
    motions = leg_motions(t, length, angle, stance, ph, 0.05)
    for leg, m in motions.items():
        own = runs_of(ph.contact[leg].tolist())
        assert len(own) == (2 if leg == first else 1)  # phases 0, 2 to the first leg, phase 1 to the other
        np.testing.assert_array_equal(m.touchdown_s, t[[a for a, _ in own]])
        expected_landing = np.zeros(t.size, bool)
        for a, _ in own:
            # the swing leg lands at the plan's leg angle and angular rate (1e-9)
            assert abs(m.angle.value[a] - angle.value[a]) <= 1e-9
            assert abs(m.angle.rate[a] - angle.rate[a]) <= 1e-9
            expected_landing[flight_run_before(stance, a):a] = True
        np.testing.assert_array_equal(m.landing, expected_landing)
        assert expected_landing.any()
        # bitwise equal to the plan in its landing flights and its stances
        follow = expected_landing | ph.contact[leg]
        for got, plan in ((m.angle, angle), (m.length, length)):
            for f in ("value", "rate", "accel"):
                np.testing.assert_array_equal(getattr(got, f)[follow], getattr(plan, f)[follow])
        assert not (m.generated & follow).any()
        assert not m.generated.flags.writeable and not m.angle.value.flags.writeable


def test_generated_spans_by_hand_when_plan_starts_and_ends_in_stance():
    # S S F F S S F F S S: left phases 0 (0-1) and 2 (8-9), right phase 1 (4-5)
    stance = np.array([1, 1, 0, 0, 1, 1, 0, 0, 1, 1], bool)
    t = np.arange(10) * 0.01
    ch = LegChannel(np.linspace(0.8, 0.9, 10), np.full(10, 1.0), np.zeros(10))
    m = leg_motions(t, ch, ch, stance, assign_legs(stance, Gait()), 0.02)
    # hand, left: lifts off after sample 1, landing flight 6-7, so generated 2..5 (span 1..6); no landing
    # before its stance at sample 0; it ends in stance
    np.testing.assert_array_equal(m["left"].generated, np.array([0, 0, 1, 1, 1, 1, 0, 0, 0, 0], bool))
    np.testing.assert_array_equal(m["left"].landing, np.array([0, 0, 0, 0, 0, 0, 1, 1, 0, 0], bool))
    np.testing.assert_array_equal(m["left"].spans, [[1, 6]])
    # hand, right: landing flight 2-3 before its touchdown at 4, span 0..2 (sample 1 generated), then
    # from its liftoff at 5 to the last sample 9 (6..8 generated)
    np.testing.assert_array_equal(m["right"].generated, np.array([0, 1, 0, 0, 0, 0, 1, 1, 1, 0], bool))
    np.testing.assert_array_equal(m["right"].landing, np.array([0, 0, 1, 1, 0, 0, 0, 0, 0, 0], bool))
    np.testing.assert_array_equal(m["right"].spans, [[0, 2], [5, 9]])
    np.testing.assert_array_equal(m["left"].touchdown_s, [0.0, 0.08])
    np.testing.assert_array_equal(m["right"].touchdown_s, [0.04])


def test_walk_without_flight_has_empty_landing_flight():
    # a hand-built assignment: stance throughout, left 0-3, right 4-7, left 8-11 (handover without flight)
    n = 12
    stance = np.ones(n, bool)
    left = np.array([1] * 4 + [0] * 4 + [1] * 4, bool)
    right = ~left
    ph = LegPhases(contact={"left": left, "right": right}, stance_leg=np.where(left, 0, 1).astype(np.int8),
                   stance_index=np.repeat([0, 1, 2], 4), runs=np.array([[0, 4], [4, 8], [8, 12]]), gait=Gait())
    t, _, full_length, full_angle = three_stance_plan()
    t = t[:n]
    length, angle = (LegChannel(c.value[:n], c.rate[:n], c.accel[:n]) for c in (full_length, full_angle))
    m = leg_motions(t, length, angle, stance, ph, 0.01)
    # hand: left's span runs from its liftoff (3) to its touchdown (8): 4..7 generated, no landing samples
    np.testing.assert_array_equal(m["left"].spans, [[3, 8]])
    np.testing.assert_array_equal(m["left"].generated, right)
    assert not m["left"].landing.any() and not m["right"].landing.any()
    assert m["left"].angle.value[8] == angle.value[8] and m["left"].angle.rate[8] == angle.rate[8]
    # hand: right's spans are 0..4 (before its stance) and 7..11 (after it)
    np.testing.assert_array_equal(m["right"].spans, [[0, 4], [7, 11]])


@pytest.mark.parametrize("first", LEGS)
def test_joins_are_continuous_and_rates_are_derivatives(first):
    t, stance, length, angle = three_stance_plan()
    clearance = 0.04
    ph = assign_legs(stance, Gait("alternating", first))
    motions = leg_motions(t, length, angle, stance, ph, clearance)
    n_spans = 0
    for m in motions.values():
        for i0, i1 in m.spans.tolist():
            n_spans += 1
            ends = t[[i0, i1]]
            for plan in (angle, length):
                start = (plan.value[i0], plan.rate[i0], plan.accel[i0])
                end = (plan.value[i1], plan.rate[i1], plan.accel[i1])
                got = hermite5(ends, t[i0], t[i1], start, end)
                # the quintic meets the plan channel's value, rate and accel at both end samples (1e-9)
                for f, g in zip(("value", "rate", "accel"), got, strict=True):
                    np.testing.assert_allclose(g, getattr(plan, f)[[i0, i1]], rtol=0, atol=1e-9)
            # the bump and its rate and accel vanish at both ends: 64 s^3 (1-s)^3 has triple roots at 0 and 1
            for b in clearance_bump(ends, t[i0], t[i1], clearance):
                np.testing.assert_allclose(b, 0.0, rtol=0, atol=1e-12)

            # interior on a fine grid: the analytic rate and accel against second-order central differences
            # of value and rate, f'(t) ~ (f(t+h) - f(t-h)) / (2h), truncation error h^2/6 max|f'''|
            fine = np.linspace(t[i0], t[i1], 20001)
            h = fine[1] - fine[0]
            hv, hr, ha = hermite5(fine, t[i0], t[i1], (length.value[i0], length.rate[i0], length.accel[i0]),
                                  (length.value[i1], length.rate[i1], length.accel[i1]))
            bv, br, ba = clearance_bump(fine, t[i0], t[i1], clearance)
            for v, r, a in ((hv - bv, hr - br, ha - ba),
                            hermite5(fine, t[i0], t[i1], (angle.value[i0], angle.rate[i0], angle.accel[i0]),
                                     (angle.value[i1], angle.rate[i1], angle.accel[i1]))):
                dv = (v[2:] - v[:-2]) / (2 * h)
                dr = (r[2:] - r[:-2]) / (2 * h)
                # bound of the truncation error h^2/6 max|f'''|, with f''' taken from the accel's differences
                jerk = np.max(np.abs(np.diff(a))) / h
                dda = np.max(np.abs(np.diff(a, 2))) / h ** 2
                np.testing.assert_allclose(dv, r[1:-1], rtol=0, atol=h ** 2 / 6 * jerk * 1.5 + 1e-9)
                np.testing.assert_allclose(dr, a[1:-1], rtol=0, atol=h ** 2 / 6 * dda * 1.5 + 1e-7)
    assert n_spans == 4  # first leg: between its stances and after its last; other leg: before and after its one


def test_assembled_motion_is_continuous_across_joins():
    # fine plan: across each join the central difference of the assembled value matches the assembled rate,
    # and that of the rate the accel, to the truncation error (Taylor: h^2/6 |f'''| for a C2 join on each
    # side; for the rate, h/4 times the jump of f''' at a C2 join). A jump in value, rate or accel shows as
    # an error of order jump / h, jump or jump.
    t, stance, length, angle = three_stance_plan(dt=1e-4)
    motions = leg_motions(t, length, angle, stance, assign_legs(stance, Gait()), 0.04)
    for m in motions.values():
        for i0, i1 in m.spans.tolist():
            for ch in (m.length, m.angle):
                for j in (i0, i1):
                    if j == 0 or j == t.size - 1:
                        continue
                    h1, h2 = t[j] - t[j - 1], t[j + 1] - t[j]
                    # three-point derivative on a non-uniform grid (Fornberg weights for f'(t_j))
                    w = (-h2 / (h1 * (h1 + h2)), (h2 - h1) / (h1 * h2), h1 / (h2 * (h1 + h2)))
                    dv = w[0] * ch.value[j - 1] + w[1] * ch.value[j] + w[2] * ch.value[j + 1]
                    dr = w[0] * ch.rate[j - 1] + w[1] * ch.rate[j] + w[2] * ch.rate[j + 1]
                    scale_r = np.max(np.abs(ch.rate)) + 1.0
                    scale_a = np.max(np.abs(ch.accel)) + 1.0
                    assert abs(dv - ch.rate[j]) <= 2e-5 * scale_r
                    assert abs(dr - ch.accel[j]) <= 1e-2 * scale_a


def test_quintic_hermite_reproduces_a_quintic():
    # Hermite interpolation (Burden & Faires, Numerical Analysis, sec. 3.4): the interpolant matching value,
    # first and second derivative at two points is the unique polynomial of degree <= 5 with those six
    # conditions, so it reproduces any quintic exactly.
    c = np.array([0.7, -0.4, 1.3, -2.2, 1.9, -0.6])  # q(t) = sum c_k t^k

    def q(tt):
        p = np.polynomial.Polynomial(c)
        return p(tt), p.deriv(1)(tt), p.deriv(2)(tt)

    fine = np.linspace(0.35, 1.7, 501)
    got = hermite5(fine, 0.35, 1.7, [x[0] for x in q(np.array([0.35]))], [x[0] for x in q(np.array([1.7]))])
    for g, want in zip(got, q(fine), strict=True):
        np.testing.assert_allclose(g, want, rtol=0, atol=1e-10)

    # the same through leg_motions with clearance 0: every generated sample lies on the quintic
    t, stance, _, _ = three_stance_plan()
    plan = LegChannel(*q(t))
    for first in LEGS:
        motions = leg_motions(t, plan, plan, stance, assign_legs(stance, Gait("alternating", first)), 0.0)
        for m in motions.values():
            assert m.generated.any()
            for ch in (m.length, m.angle):
                for f in ("value", "rate", "accel"):
                    np.testing.assert_allclose(getattr(ch, f), getattr(plan, f), rtol=0, atol=1e-9)


def test_mid_swing_shortening_of_a_straight_line_plan():
    # constant leg (l0, angle), zero rates: the quintic is the constant and the length dips by the bump.
    # Dyadic time step (2^-8 s) so that the span's middle sample has s = 1/2 exactly.
    l0, a0, clearance = 0.83, 0.12, 0.065
    n = 200
    t = np.arange(n) * 2.0 ** -8
    stance = np.zeros(n, bool)
    stance[20:60] = stance[100:140] = stance[170:190] = True
    zeros = np.zeros(n)
    motions = leg_motions(t, (np.full(n, l0), zeros, zeros), (np.full(n, a0), zeros, zeros), stance,
                          assign_legs(stance, Gait()), clearance)
    # hand: left takes phases 0 (20-59) and 2 (170-189), right phase 1 (100-139). Generated spans (end samples):
    # left from its liftoff 59 to its landing flight's start 140, then 189 to the last sample 199; right from
    # sample 0 to its landing flight's start 60, then 139 to 199.
    assert motions["left"].spans.tolist() == [[59, 140], [189, 199]]
    assert motions["right"].spans.tolist() == [[0, 60], [139, 199]]
    checked = 0
    for m in motions.values():
        for i0, i1 in m.spans.tolist():
            assert m.generated[i0 + 1:i1].all()
            if (i1 - i0) % 2:
                continue  # no sample at s = 1/2
            checked += 1
            mid = (i0 + i1) // 2
            # 64 s^3 (1 - s)^3 at s = 1/2 is 64 / 64 = 1 (hand arithmetic): length l0 - clearance exactly
            assert m.length.value[mid] == l0 - clearance
            assert m.length.rate[mid] == 0.0  # d/ds u^3 = 3 u^2 (1 - 2 s) = 0 at s = 1/2
            # d2/ds2 64 s^3 (1-s)^3 at s = 1/2: 64 (6 u (1-2s)^2 - 6 u^2) = 64 (-6/16) = -24 (hand), over T^2;
            # the length is l0 minus the bump, so its accel is +24 clearance / T^2
            big_t = t[i1] - t[i0]
            np.testing.assert_allclose(m.length.accel[mid], 24.0 * clearance / big_t ** 2, rtol=1e-12)
            # the deepest point of the span is its middle
            assert np.argmin(m.length.value[i0:i1 + 1]) == mid - i0
        np.testing.assert_array_equal(m.angle.value, np.full(n, a0))  # the angle stays at the plan's
    assert checked == 3


def test_same_leg_holds_the_other_leg():
    t, stance, length, angle = three_stance_plan()
    gait = Gait("same-leg", "left", held_leg_angle_rad=-0.15, held_leg_length_m=0.72)
    m = leg_motions(t, length, angle, stance, assign_legs(stance, gait), 0.03)
    held = m["right"]
    np.testing.assert_array_equal(held.angle.value, np.full(t.size, -0.15))
    np.testing.assert_array_equal(held.length.value, np.full(t.size, 0.72))
    for ch in (held.angle, held.length):
        np.testing.assert_array_equal(ch.rate, 0.0)
        np.testing.assert_array_equal(ch.accel, 0.0)
    assert held.generated.all() and held.touchdown_s.size == 0
    # the stance leg: every flight between its stances is a landing flight, followed exactly; only the
    # trailing flight after its last liftoff is generated (hand: from the last stance sample to the end)
    left = m["left"]
    last_stance = int(np.flatnonzero(stance)[-1])
    np.testing.assert_array_equal(left.spans, [[last_stance, t.size - 1]])
    np.testing.assert_array_equal(left.angle.value[:last_stance + 1], angle.value[:last_stance + 1])
    with pytest.raises(PlanFormatError, match=r"gait\.held_leg_length_m"):
        leg_motions(t, length, angle, stance, assign_legs(stance, Gait("same-leg")), 0.03)


def test_both_legs_follow_plan_everywhere():
    t, stance, length, angle = three_stance_plan()
    m = leg_motions(t, length, angle, stance, assign_legs(stance, Gait("both")), 0.05)
    for leg in LEGS:
        assert not m[leg].generated.any() and m[leg].spans.shape == (0, 2)
        for got, plan in ((m[leg].angle, angle), (m[leg].length, length)):
            for f in ("value", "rate", "accel"):
                np.testing.assert_array_equal(getattr(got, f), getattr(plan, f))


def test_leg_motions_refuses_bad_input():
    t, stance, length, angle = three_stance_plan()
    ph = assign_legs(stance, Gait())
    bad_t = t.copy()
    bad_t[7] = bad_t[6] - 1e-3  # equal times are allowed (a phase end shares a grid sample's time); going back is not
    with pytest.raises(PlanFormatError, match=r"'time_s\[7\]'.*expected at least"):
        leg_motions(bad_t, length, angle, stance, ph, 0.05)
    with pytest.raises(PlanFormatError, match=r"'clearance_m'.*expected a finite length >= 0"):
        leg_motions(t, length, angle, stance, ph, -0.01)
    with pytest.raises(PlanFormatError, match="'phases'"):
        leg_motions(t, length, angle, ~stance, ph, 0.05)
    with pytest.raises(PlanFormatError, match=r"'length'.*expected"):
        leg_motions(t, LegChannel(length.value[:-1], length.rate[:-1], length.accel[:-1]), angle, stance, ph, 0.05)
    with pytest.raises(PlanFormatError, match="differ in length"):
        LegChannel([1.0, 2.0], [0.0], [0.0, 0.0])
