"""Inverse design: hole positions, diameters, tube length and cork for a fingering table.

The instruments are invented. Targets are 12-TET from A4 = 440 Hz (ISO 16:1975; standard number
and year from memory). Every design is checked independently: the returned geometry is rebuilt
as an Instrument and its playing frequencies recomputed, rather than trusting the solver's own
report. The least-squares check uses the definition of cents (1200 log2): the best single pitch
for two targets is their geometric mean. The goals (2 cents in the first register, 10 in the
second) are the design's own, not published figures; the independent check of a two-register
design against a transfer-matrix model written from the papers is in test_two_registers.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from reference_air import AIR

from compiler.acoustics.impedance import Bore, Head, Hole, Instrument
from compiler.acoustics.playing import resonances
from compiler.acoustics.solve import (
    GOAL_CENTS,
    CorkRange,
    Design,
    DesignError,
    FixedHole,
    HoleConstraints,
    design_holes,
    finger_pairs,
)

DRILLS = tuple(np.round(np.arange(2.0, 13.01, 0.5), 1) / 1000)  # metric, 0.5 mm steps


def et(midi: int) -> float:
    # 12-TET from A4 = 440 Hz (ISO 16:1975, standard number and year from memory).
    return float(440.0 * 2 ** ((midi - 69) / 12))


def scale_table(n_holes: int) -> np.ndarray:
    """xxx xxx, xxx xxo, xxx xoo, ... ooo ooo: holes opened from the foot up."""
    return np.array([[True] * (n_holes - i) + [False] * i for i in range(n_holes + 1)])


# Six-hole duct flute in D, aluminium tube 22 mm × 1 mm wall: D5..C#6, and D6 overblown.
DUCT_HEAD = Head(
    "duct",
    mouth_position_m=0.025,
    window_length_m=0.006,
    window_width_m=0.012,
    window_thickness_m=0.001,
    cavity_length_m=0.003,
)
DUCT_TABLE = np.vstack([scale_table(6), scale_table(6)[:1]])
DUCT_TARGETS = [et(m) for m in (74, 76, 78, 79, 81, 83, 85)] + [et(86)]
DUCT_REGISTERS = [1] * 7 + [2]

# Eight-hole side-blown flute in C, tube 19.05 mm × 1.24 mm wall: C5..D6, both registers.
FLUTE_HEAD = Head(
    "embouchure",
    mouth_position_m=0.03,
    embouchure_radius_m=0.0045,
    embouchure_chimney_m=0.0035,
    cavity_length_m=0.017,
)
FLUTE_BORE = Bore.cylinder(0.01905 / 2 - 0.00124)
FLUTE_NOTES = (72, 74, 76, 77, 79, 81, 83, 84, 86)
FLUTE_TABLE = np.vstack([scale_table(8), scale_table(8)])
FLUTE_TARGETS = [et(m) for m in FLUTE_NOTES] + [et(m + 12) for m in FLUTE_NOTES]
FLUTE_REGISTERS = [1] * 9 + [2] * 9
FLUTE_LIMITS = HoleConstraints(max_diameter_m=0.010, min_web_m=0.003)


def rebuild(d: Design, wall: float) -> Instrument:
    holes = tuple(
        Hole(x, di / 2, wall) for x, di in zip(d.hole_positions_m, d.hole_diameters_m, strict=True)
    )
    return Instrument(d.instrument.bore, holes, d.instrument.head, d.length_m)


def check_design(
    d: Design,
    table: np.ndarray,
    targets: list[float],
    regs: list[int],
    wall: float,
    limits: HoleConstraints,
) -> None:
    first = np.array(regs) == 1
    # after snapping to the drill set and solving again, the first register within its goal
    pred = resonances(rebuild(d, wall), AIR, table).frequencies_hz
    got = pred[np.arange(len(targets)), np.array(regs) - 1]
    resid = 1200 * np.log2(got / np.array(targets))
    assert np.max(np.abs(resid[first])) <= GOAL_CENTS[1]
    np.testing.assert_allclose(np.array(d.predicted_hz), pred, rtol=1e-7)
    np.testing.assert_allclose(np.array(d.residual_cents), resid, atol=1e-4)
    # every diameter is a drill, every constraint holds
    x = np.array(d.hole_positions_m)
    dia = np.array(d.hole_diameters_m)
    for di in dia:
        assert np.min(np.abs(np.array(DRILLS) - di)) < 1e-12
    assert np.all(dia >= limits.min_diameter_m) and np.all(dia <= limits.max_diameter_m)
    web = np.diff(x) - 0.5 * (dia[1:] + dia[:-1])
    assert np.all(web >= limits.min_web_m - 2e-5)
    assert x[-1] < d.length_m


def test_six_hole_duct_flute() -> None:
    d = design_holes(
        Bore.cylinder(0.010),
        0.001,
        DUCT_HEAD,
        DUCT_TABLE,
        DUCT_TARGETS,
        AIR,
        registers=DUCT_REGISTERS,
        drills_m=DRILLS,
        note_names=("D5", "E5", "F#5", "G5", "A5", "B5", "C#6", "D6"),
    )
    check_design(d, DUCT_TABLE, DUCT_TARGETS, DUCT_REGISTERS, 0.001, HoleConstraints())
    # a D5 flute is about a foot long: half a wavelength at 587 Hz is c/2f ≈ 0.29 m, less the
    # end corrections (open-open half-wave resonance, Fletcher & Rossing 1998 ch. 8, from memory)
    assert 0.2 < d.length_m < 0.35
    assert d.iterations > 0
    # the second register of the all-closed fingering is solved for D6, within its goal
    assert abs(d.residual_cents[-1]) <= GOAL_CENTS[2]


def test_first_register_alone_is_met_exactly_before_snapping() -> None:
    # A determined table (one note per hole and the all-closed note): the model meets every
    # note to a tenth of a cent before the drills, with hole sizes near the trade's rule.
    d = design_holes(Bore.cylinder(0.010), 0.001, DUCT_HEAD, DUCT_TABLE[:7], DUCT_TARGETS[:7],
                     AIR, drills_m=DRILLS)
    assert np.max(np.abs(d.unsnapped_residual_cents)) <= 0.1
    check_design(d, DUCT_TABLE[:7], DUCT_TARGETS[:7], [1] * 7, 0.001, HoleConstraints())


def test_eight_hole_side_blown_flute_two_registers() -> None:
    # Five overblown fingerings and a free cork: both registers within their goals, the cork
    # inside its range; a first-register-only design of the same flute leaves the second
    # register further out (the cork fixed where it started, the sizes by the rule).
    cork = CorkRange(0.25 * 2 * FLUTE_BORE.segments[0].radius_in_m,
                     1.2 * 2 * FLUTE_BORE.segments[0].radius_in_m, 0.017)
    rows = list(range(9)) + list(range(9, 14))
    args = (FLUTE_BORE, 0.00124, FLUTE_HEAD, FLUTE_TABLE[rows], [FLUTE_TARGETS[i] for i in rows],
            AIR)
    regs = [FLUTE_REGISTERS[i] for i in rows]
    d = design_holes(*args, registers=regs, drills_m=DRILLS, constraints=FLUTE_LIMITS, cork=cork)
    check_design(d, FLUTE_TABLE[rows], [FLUTE_TARGETS[i] for i in rows], regs, 0.00124,
                 FLUTE_LIMITS)
    second = np.abs(np.array(d.residual_cents)[9:])
    assert np.max(second) <= GOAL_CENTS[2]
    assert cork.low_m <= d.cork_m <= cork.high_m
    assert len(d.predicted_hz) == 14 and len(d.octave_cents) == 14
    only_first = design_holes(*args, registers=regs, drills_m=DRILLS, constraints=FLUTE_LIMITS,
                              cork=CorkRange(0.017, 0.017, 0.017), second_weight=0.0)
    assert np.max(np.abs(np.array(only_first.residual_cents)[9:])) > np.max(second) + 5.0


def test_hand_span_is_respected() -> None:
    limits = HoleConstraints(max_diameter_m=0.010, min_web_m=0.003, max_span_m=0.026)
    d = design_holes(
        FLUTE_BORE,
        0.00124,
        FLUTE_HEAD,
        FLUTE_TABLE[:9],
        FLUTE_TARGETS[:9],
        AIR,
        drills_m=DRILLS,
        constraints=limits,
    )
    check_design(d, FLUTE_TABLE[:9], FLUTE_TARGETS[:9], [1] * 9, 0.00124, limits)
    assert np.max(np.diff(d.hole_positions_m)) <= 0.026 + 2e-5
    # without the limit some gaps are wider: the constraint really bound
    free = design_holes(
        FLUTE_BORE,
        0.00124,
        FLUTE_HEAD,
        FLUTE_TABLE[:9],
        FLUTE_TARGETS[:9],
        AIR,
        drills_m=DRILLS,
        constraints=FLUTE_LIMITS,
    )
    assert np.max(np.diff(free.hole_positions_m)) > 0.027


def test_neighbouring_fingers_keep_their_room() -> None:
    # Adult finger pads sit about 17–22 mm apart, centre to centre, on a flute's holes (common
    # practice, from memory): 17 mm between the centres of neighbouring front holes, measured
    # on the tube's outside. The first hole is a thumb hole at the back (180°), covered by
    # the thumb: it may sit closer to hole 2. Hole 6 is turned 40° round the tube, so its
    # neighbours need less distance along the tube for the same 17 mm on the surface.
    angles = (180.0, 0.0, 0.0, 0.0, 0.0, 40.0, 0.0, 0.0)
    outside = 0.01905
    least = 0.017
    limits = HoleConstraints(max_diameter_m=0.010, min_web_m=0.003, min_span_m=least,
                             fingers=finger_pairs(angles, outside, least))
    args = (FLUTE_BORE, 0.00124, FLUTE_HEAD, FLUTE_TABLE[:9], FLUTE_TARGETS[:9], AIR)
    d = design_holes(*args, drills_m=DRILLS, constraints=limits)
    check_design(d, FLUTE_TABLE[:9], FLUTE_TARGETS[:9], [1] * 9, 0.00124, limits)
    x = np.array(d.hole_positions_m)
    # Surface distance between two hole centres: the tube's outside unrolled is a plane, the
    # turn an arc of π·D·angle/360 across it (plane geometry).
    for upper, lower in [(1, 2), (2, 3), (3, 4), (4, 5), (5, 6), (6, 7)]:
        arc = np.pi * outside * abs(angles[lower] - angles[upper]) / 360.0
        assert np.hypot(x[lower] - x[upper], arc) >= least - 2e-5, (upper, lower)
    # without the limit the solver puts some neighbours closer than fingers can cover (the
    # constraint really bound), and the thumb hole is held to nothing but the web
    free = design_holes(*args, drills_m=DRILLS, constraints=HoleConstraints(
        max_diameter_m=0.010, min_web_m=0.003))
    assert np.min(np.diff(free.hole_positions_m)[1:]) < 0.013
    assert x[1] - x[0] < least


def test_fixed_holes_too_close_for_fingers() -> None:
    fixed = (None, None, None, FixedHole(0.200), FixedHole(0.212), None)
    limits = HoleConstraints(min_span_m=0.015)
    with pytest.raises(DesignError) as err:
        design_holes(Bore.cylinder(0.010), 0.001, DUCT_HEAD, DUCT_TABLE[:7], DUCT_TARGETS[:7],
                     AIR, fixed=fixed, constraints=limits)
    assert err.value.hole == 4
    assert "12.0 mm apart" in err.value.message and "`min_span`" in err.value.message


def test_least_squares_when_targets_outnumber_unknowns() -> None:
    # A plain tube (no holes) asked for two pitches at once: the length that minimises the sum of
    # squared cents errors sounds their geometric mean.
    head = Head("open")
    d = design_holes(
        Bore.cylinder(0.006), 0.001, head, np.ones((2, 0), bool), [440.0, 446.0], AIR, losses="none"
    )
    f = d.predicted_hz[0][0]
    assert 1200 * np.log2(f / np.sqrt(440.0 * 446.0)) == pytest.approx(0.0, abs=0.01)
    assert d.residual_cents[0] == pytest.approx(-d.residual_cents[1], abs=0.01)


def test_all_fixed_is_analysis_only() -> None:
    holes = (FixedHole(0.15, 0.008), FixedHole(0.18, 0.009))
    table = np.array([[True, True], [True, False], [False, False]])
    d = design_holes(
        Bore.cylinder(0.0095),
        0.0015,
        DUCT_HEAD,
        table,
        [600.0, 700.0, 800.0],
        AIR,
        fixed=holes,
        length_m=0.3,
    )
    inst = Instrument(
        Bore.cylinder(0.0095),
        (Hole(0.15, 0.004, 0.0015), Hole(0.18, 0.0045, 0.0015)),
        DUCT_HEAD,
        0.3,
    )
    np.testing.assert_allclose(
        np.array(d.predicted_hz), resonances(inst, AIR, table).frequencies_hz, rtol=1e-9
    )
    assert d.hole_positions_m == (0.15, 0.18) and d.length_m == 0.3


def test_fixed_position_frees_the_diameter() -> None:
    free = design_holes(
        Bore.cylinder(0.010), 0.001, DUCT_HEAD, DUCT_TABLE[:7], DUCT_TARGETS[:7], AIR
    )
    moved = free.hole_positions_m[2] - 0.002  # two millimetres higher: the hole must shrink
    fixed = (None, None, FixedHole(position_m=moved), None, None, None)
    d = design_holes(
        Bore.cylinder(0.010), 0.001, DUCT_HEAD, DUCT_TABLE[:7], DUCT_TARGETS[:7], AIR, fixed=fixed
    )
    assert d.hole_positions_m[2] == moved
    assert d.hole_diameters_m[2] < free.hole_diameters_m[2]
    assert np.max(np.abs(d.residual_cents)) <= 0.1


def test_note_below_the_all_closed_note() -> None:
    targets = list(DUCT_TARGETS[:7])
    targets[3] = et(72)  # a C5 asked of "xxx ooo", below the all-closed D5
    names = ("D5", "E5", "F#5", "C5", "A5", "B5", "C#6")
    with pytest.raises(DesignError) as err:
        design_holes(
            Bore.cylinder(0.010), 0.001, DUCT_HEAD, DUCT_TABLE[:7], targets, AIR, note_names=names
        )
    assert err.value.row == 3
    assert "all-closed" in err.value.message and err.value.hint


def test_fixed_length_too_short_for_the_lowest_note() -> None:
    names = ("D5", "E5", "F#5", "G5", "A5", "B5", "C#6")
    with pytest.raises(DesignError) as err:
        design_holes(
            Bore.cylinder(0.010),
            0.001,
            DUCT_HEAD,
            DUCT_TABLE[:7],
            DUCT_TARGETS[:7],
            AIR,
            length_m=0.2,
            note_names=names,
        )
    assert err.value.row == 0
    assert "length" in err.value.message and "length" in err.value.hint


def test_note_beyond_reach() -> None:
    # A7 with every hole open: above the shortest configuration the tube allows.
    targets = list(DUCT_TARGETS[:7])
    targets[6] = et(105)
    names = ("D5", "E5", "F#5", "G5", "A5", "B5", "A7")
    with pytest.raises(DesignError) as err:
        design_holes(
            Bore.cylinder(0.010), 0.001, DUCT_HEAD, DUCT_TABLE[:7], targets, AIR, note_names=names
        )
    assert err.value.row == 6 and err.value.hole is None
    assert "reach" in err.value.message and "larger holes" in err.value.hint


def test_note_that_cannot_be_tuned() -> None:
    # D7 after C#6: within the bound above, but the model finds no layout that plays it.
    targets = list(DUCT_TARGETS[:7])
    targets[6] = et(98)
    names = ("D5", "E5", "F#5", "G5", "A5", "B5", "D7")
    with pytest.raises(DesignError) as err:
        design_holes(
            Bore.cylinder(0.010), 0.001, DUCT_HEAD, DUCT_TABLE[:7], targets, AIR, note_names=names
        )
    assert err.value.row == 6
    assert "D7" in err.value.message and "flat" in err.value.message
    # what would reach it, in the maker's terms: the holes are at their largest allowed size
    assert "larger" in err.value.hint and "max_diameter" in err.value.hint


def test_span_beyond_the_hand() -> None:
    # 8 mm between centres leaves room for 2 mm holes and the 3 mm web, not for the notes.
    limits = HoleConstraints(max_diameter_m=0.010, max_span_m=0.008)
    with pytest.raises(DesignError) as err:
        design_holes(
            FLUTE_BORE,
            0.00124,
            FLUTE_HEAD,
            FLUTE_TABLE[:9],
            FLUTE_TARGETS[:9],
            AIR,
            constraints=limits,
        )
    # it names what it concerns (a hole pair or a note) and what would reach it: a wider span
    assert (err.value.hole, err.value.row) != (None, None)
    assert "span wider than 8.0 mm" in err.value.hint and "`max_span`" in err.value.hint


def test_hole_larger_than_allowed() -> None:
    fixed = (None, FixedHole(diameter_m=0.015), None, None, None, None)
    with pytest.raises(DesignError) as err:
        design_holes(
            Bore.cylinder(0.010),
            0.001,
            DUCT_HEAD,
            DUCT_TABLE[:7],
            DUCT_TARGETS[:7],
            AIR,
            fixed=fixed,
        )
    assert err.value.hole == 1
    assert isinstance(err.value, ValueError)


def test_mismatched_table_is_refused() -> None:
    with pytest.raises(DesignError) as err:
        design_holes(Bore.cylinder(0.010), 0.001, DUCT_HEAD, DUCT_TABLE[:7], DUCT_TARGETS, AIR)
    assert err.value.about == "fingerings"
