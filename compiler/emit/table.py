"""Plain-text tables of the resolved model, for ``boresmith resolve`` on a terminal."""

from __future__ import annotations

from compiler.display import (
    SENSITIVITY_STEP_IN,
    Inches,
    fitted,
    in_inches,
    inches_for,
    model_band,
)
from compiler.ir import Group, Pipe, Resolved


def _mm(metres: float | None) -> str:
    return "" if metres is None else f"{metres * 1000:.1f}"


def _in(metres: float | None, inches: Inches | None) -> str:
    """Inches in fractions of the spec's precision (``compiler.display``), for specs
    written in inches or feet."""
    return "" if metres is None or inches is None else inches.text(metres)


def _signed(value: float | None) -> str:
    return "" if value is None else f"{value:+.2f}"


def _section(pipe: Pipe) -> str:
    if pipe.section == "round":
        return f"ø{_mm(pipe.inside_diameter_m)}"
    return f"{_mm(pipe.inside_width_m)}×{_mm(pipe.inside_depth_m)}"


def _align(rows: list[list[str]], right: set[int]) -> list[str]:
    widths = [max(len(row[i]) for row in rows) for i in range(len(rows[0]))]
    lines = []
    for row in rows:
        cells = [cell.rjust(w) if i in right else cell.ljust(w)
                 for i, (cell, w) in enumerate(zip(row, widths, strict=True))]
        lines.append("  ".join(cells).rstrip())
    return lines


def _calibration(group: Group) -> str:
    fit = group.calibration
    if not fit.calibrated:
        return "uncalibrated"
    text = f"calibrated, {fit.parameter} {fitted(fit.value, fit.unit)}, "
    text += "".join(f"{m.name} {m.value:.3f}, " for m in fit.more)
    if len(fit.residuals) == 1:
        return text + "an exact fit of one measurement (measure more pipes to check the model)"
    return text + f"rms {fit.rms_cents:.2f} cents over {len(fit.residuals)} measurements"


def _group_table(group: Group, pipes: list[Pipe], inches: Inches | None = None) -> list[str]:
    air = group.air
    lines = [f"{group.id} ({group.family}, {group.construction}): "
             f"{air.temperature_c:.1f} C, {air.humidity_percent:.0f} % RH, "
             f"c = {air.speed_m_s:.2f} m/s ({air.sound_speed_model}); "
             + (f"wall losses: {group.losses}; " if group.losses else "")
             + _calibration(group)]
    if air.sound_speed_formula:
        lines.append(f"  speed of sound: {air.sound_speed_formula}")
    header = ["note", "target Hz", "predicted Hz", "cents", "speaking mm", "cut mm",
              "section mm", "mouth mm", "cut-up mm", "toe mm", "stock"]
    banded = any(p.mouth and p.mouth.band_percent for p in pipes)
    if banded:
        header[10:10] = ["mouth ± mm", "± cents", "cents/mm cut-up"]
    rows = [header]
    for p in pipes:
        row = [
            p.note, f"{p.target_hz:.2f}", f"{p.predicted_hz:.2f}", f"{p.error_cents:+.2f}",
            _mm(p.speaking_length_m), _mm(p.cut_length_m), _section(p),
            _mm(p.mouth.width_m) if p.mouth else "", _mm(p.mouth.cutup_m) if p.mouth else "",
            _mm(p.foot.toe_hole_m) if p.foot else "", p.stock]
        if banded:
            m = p.mouth
            row[10:10] = [f"{m.band_m * 1000:.1f}", f"{m.band_sharp_cents:+.1f}/"
                          f"{m.band_flat_cents:+.1f}", f"{m.cutup_cents_per_mm:+.2f}"] if (
                m and m.band_percent) else ["", "", ""]
        rows.append(row)
    if inches:
        header += ["speaking in", "cut in", "section in", "mouth in", "cut-up in", "toe in"]
        if banded:
            header += [f"cents/{SENSITIVITY_STEP_IN} in cut-up"]
        for row, p in zip(rows[1:], pipes, strict=True):
            section = (f"ø{_in(p.inside_diameter_m, inches)}" if p.section == "round" else
                       f"{_in(p.inside_width_m, inches)}×{_in(p.inside_depth_m, inches)}")
            row += [_in(p.speaking_length_m, inches), _in(p.cut_length_m, inches), section,
                    _in(p.mouth.width_m if p.mouth else None, inches),
                    _in(p.mouth.cutup_m if p.mouth else None, inches),
                    _in(p.foot.toe_hole_m if p.foot else None, inches)]
            if banded:
                m = p.mouth
                row.append(f"{inches.per_step(m.cutup_cents_per_mm):+.2f}"
                           if m and m.band_percent else "")
    extra = 3 if banded else 0  # the band's columns sit before the stock's (column 10)
    right = {1, 2, 3, 4, 5, 7, 8, 9} | set(range(10, 10 + extra)) | set(
        range(11 + extra, 18 + extra))
    lines += _align(rows, right=right)
    for p in pipes:
        if p.holes:
            lines.append("")
            lines.append(f"{p.id}: holes (from the top end), cut length {_mm(p.cut_length_m)} mm")
            hole_rows = [["hole", "from top mm", "from bottom mm", "diameter mm", "angle"]
                         + (["from top in", "diameter in"] if inches else [])]
            hole_rows += [[h.label, _mm(h.position_from_top_m), _mm(h.position_from_bottom_m),
                           _mm(h.diameter_m), f"{h.angle_deg:g}°"]
                          + ([_in(h.position_from_top_m, inches), _in(h.diameter_m, inches)]
                             if inches else [])
                          for h in p.holes]
            lines += _align(hole_rows, right={1, 2, 3, 4, 5, 6})
        if p.head is not None and (p.head.cork_m is not None or p.head.resonance_hz):
            lines.append("")
            words = []
            if p.head.cork_m is not None:
                words.append(f"cork {_mm(p.head.cork_m)} mm above the embouchure centre")
            if p.head.resonance_hz:
                words.append(f"head resonance {p.head.resonance_hz:.0f} Hz")
            lines.append(f"{p.id}: " + ", ".join(words))
        if p.fingerings:
            lines.append("")
            f_rows = [["note", "reg", "fingering", "target Hz", "predicted Hz", "cents",
                       "hole model ± cents", "cutoff Hz"]]
            f_rows += [[f.note, str(f.register),
                        "".join("x" if c else "o" for c in f.closed),
                        f"{f.target_hz:.2f}", f"{f.predicted_hz:.2f}",
                        f"{f.error_cents:+.2f}" if f.resonance == "clear" else f.resonance,
                        model_band(f.model_band_cents),
                        f"{f.cutoff_hz:.0f}" if f.cutoff_hz is not None else ""]
                       for f in p.fingerings]
            if any(f.nearest_note is not None for f in p.fingerings):
                # A survey: the nearest note of the tuning and the pitch's drift with the air.
                f_rows[0] += ["nearest", "cents", "cents/C"]
                for row, f in zip(f_rows[1:], p.fingerings, strict=True):
                    row += [f.nearest_note or "", _signed(f.nearest_cents),
                            _signed(f.cents_per_c)]
            lines += _align(f_rows, right={3, 4, 5, 6, 7, 9, 10})
    return lines


def _trim_table(group: Group, inches: Inches | None = None) -> list[str]:
    """Trim advice for the group's measured pipes, in the spec's air (and the change and
    the advice in inches too for a spec in inches)."""
    if not group.trims:
        return []
    lines = ["", f"trim advice for the measured pipes, to sound their targets at "
             f"{group.air.temperature_c:.1f} C:"]
    rows = [["note", "built mm", "measured Hz", "at C", "in spec air Hz", "target Hz",
             "off cents", "change mm", "advice"]]
    rows += [[t.note, _mm(t.built_length_m), f"{t.measured_hz:.2f}",
              f"{t.measured_temperature_c:.1f}", f"{t.in_spec_air_hz:.2f}",
              f"{t.target_hz:.2f}", f"{t.off_cents:+.2f}", f"{t.change_m * 1000:+.2f}",
              in_inches(t.advice, inches)] for t in group.trims]
    if inches:
        rows[0][-1:-1] = ["change in"]
        for row, t in zip(rows[1:], group.trims, strict=True):
            row[-1:-1] = [_in(t.change_m, inches)]
    return lines + _align(rows, right=set(range(1, 9 if inches else 8)))


def render(resolved: Resolved) -> str:
    """All groups, one aligned table each, with their trim advice."""
    by_id = {p.id: p for p in resolved.pipes}
    lines = [f"{resolved.instrument} — {resolved.spec_file}",
             f"tuning: A4 = {resolved.tuning.a4_hz:g} Hz, {resolved.tuning.temperament} "
             f"on {resolved.tuning.tonic}"]
    inches = inches_for(resolved.fabrication.units, resolved.fabrication.precision_m)
    for group in resolved.groups:
        lines.append("")
        lines += _group_table(group, [by_id[i] for i in group.pipe_ids], inches)
        lines += _trim_table(group, inches)
    return "\n".join(lines) + "\n"
