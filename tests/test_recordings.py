"""`boresmith measure`: WAV and FLAC files of every kind a recorder writes, read back and
turned into `measured:` entries.

The files are written here, independently of the reader: PCM through the standard
library's `wave`, IEEE float and WAVE_FORMAT_EXTENSIBLE byte by byte with `struct` (the
RIFF/WAVE layout: Microsoft, "Multimedia Programming Interface and Data Specifications
1.0", 1991, and the WAVEFORMATEXTENSIBLE structure with its KSDATAFORMAT_SUBTYPE GUIDs),
FLAC through soundfile. The truth of every pitch is the frequency synthesised.
"""

from __future__ import annotations

import json
import math
import re
import struct
import wave
from pathlib import Path

import numpy as np
import pytest
import yaml

from compiler.cli import main
from compiler.recordings import note_in_name, read_audio
from compiler.resolve.resolver import resolve
from compiler.spec import load_spec

ROOT = Path(__file__).resolve().parents[1]
RATE = 48000
GUID_TAIL = bytes.fromhex("000000001000800000aa00389b71")


def signal(f0: float = 92.93, seconds: float = 2.5, channels: int = 1) -> np.ndarray:
    """A stopped pipe's tone (odd partials), −6 dBFS; channels differ in level."""
    t = np.arange(int(seconds * RATE)) / RATE
    x = (0.3 * np.sin(2 * np.pi * f0 * t) + np.sin(2 * np.pi * 3 * f0 * t + 1)
         + 0.4 * np.sin(2 * np.pi * 5 * f0 * t + 2))
    x *= 0.5 / np.max(np.abs(x))
    return np.stack([x * (1 - 0.2 * c) for c in range(channels)], axis=1)


def pcm_bytes(x: np.ndarray, bits: int) -> bytes:
    if bits == 8:
        return (np.round(x * 127) + 128).astype(np.uint8).tobytes()
    codes = np.round(x * (2 ** (bits - 1) - 1)).astype(np.int64).reshape(-1)
    if bits == 24:
        return b"".join(int(c).to_bytes(3, "little", signed=True) for c in codes)
    return codes.astype(f"<i{bits // 8}").tobytes()


def write_pcm(path: Path, x: np.ndarray, bits: int) -> None:
    with wave.open(str(path), "wb") as w:
        w.setnchannels(x.shape[1])
        w.setsampwidth(bits // 8)
        w.setframerate(RATE)
        w.writeframes(pcm_bytes(x, bits))


def write_riff(path: Path, x: np.ndarray, bits: int, *, floating: bool,
               extensible: bool) -> None:
    """A WAV written field by field: IEEE float (tag 3) or WAVE_FORMAT_EXTENSIBLE."""
    channels = x.shape[1]
    data = x.astype(f"<f{bits // 8}").tobytes() if floating else pcm_bytes(x, bits)
    block = channels * bits // 8
    tag = 0xFFFE if extensible else (3 if floating else 1)
    fmt = struct.pack("<HHIIHH", tag, channels, RATE, RATE * block, block, bits)
    if extensible:
        sub = struct.pack("<H", 3 if floating else 1) + GUID_TAIL
        fmt += struct.pack("<HHI", 22, bits, (1 << channels) - 1) + sub
    else:
        fmt += struct.pack("<H", 0)
    chunks = b"fmt " + struct.pack("<I", len(fmt)) + fmt
    chunks += b"LIST" + struct.pack("<I", 5) + b"INFOx" + b"\0"  # an odd chunk, padded
    if floating:
        chunks += b"fact" + struct.pack("<II", 4, len(x))
    chunks += b"data" + struct.pack("<I", len(data)) + data
    path.write_bytes(b"RIFF" + struct.pack("<I", 4 + len(chunks)) + b"WAVE" + chunks)


FORMATS = [
    ("pcm8", 8, False, False), ("pcm16", 16, False, False), ("pcm24", 24, False, False),
    ("pcm32", 32, False, False), ("float32", 32, True, False), ("float64", 64, True, False),
    ("ext-pcm24", 24, False, True), ("ext-float32", 32, True, True),
]


@pytest.mark.parametrize("channels", [1, 2])
@pytest.mark.parametrize(("name", "bits", "floating", "extensible"), FORMATS,
                         ids=[f[0] for f in FORMATS])
def test_every_wav_encoding_reads_back(tmp_path: Path, name: str, bits: int, floating: bool,
                                       extensible: bool, channels: int) -> None:
    x = signal(channels=channels)
    path = tmp_path / f"{name}.wav"
    if floating or extensible:
        write_riff(path, x, bits, floating=floating, extensible=extensible)
    else:
        write_pcm(path, x, bits)
    audio = read_audio(path)
    assert (audio.rate, audio.channels) == (RATE, channels)
    assert audio.encoding == (f"{bits}-bit float" if floating else f"{bits}-bit PCM")
    # one quantisation step; float32 keeps 24 significant bits (IEEE 754 binary32)
    step = (2.0 ** -24 if bits == 32 else 0.0) if floating else 1.0 / 2 ** (bits - 1)
    assert np.max(np.abs(audio.samples - x.mean(axis=1))) <= step + 1e-12


def test_flac_reads_as_the_same_samples(tmp_path: Path) -> None:
    import soundfile

    x = signal(channels=2)
    soundfile.write(str(tmp_path / "take.flac"), x, RATE, subtype="PCM_24")
    audio = read_audio(tmp_path / "take.flac")
    assert (audio.rate, audio.channels, audio.encoding) == (RATE, 2, "FLAC")
    assert np.max(np.abs(audio.samples - x.mean(axis=1))) <= 2.0 ** -23  # lossless, 24 bits


def test_note_in_the_file_name() -> None:
    assert note_in_name(Path("G2.wav")) == 43
    assert note_in_name(Path("gedackt-F#3-take2.wav")) == 54
    assert note_in_name(Path("gedackt-8-Fs3.flac")) == 54  # pipe ids spell sharps with s
    assert note_in_name(Path("Bb4.wav")) == 70
    assert note_in_name(Path("take-12.wav")) is None


def _entries(text: str) -> list[dict[str, object]]:
    loaded = yaml.safe_load(text)
    assert list(loaded) == ["measured"]
    entries: list[dict[str, object]] = loaded["measured"]
    return entries


def test_measure_prints_entries_ready_to_paste(tmp_path: Path,
                                               capsys: pytest.CaptureFixture[str]) -> None:
    # Two pipes of the gedackt example, recorded at 19 C: a 24-bit stereo WAV and a FLAC.
    import soundfile

    write_pcm(tmp_path / "gedackt-G2.wav", signal(92.93, channels=2), 24)
    soundfile.write(str(tmp_path / "gedackt-C3.flac"), signal(123.9), RATE)
    assert main(["measure", str(tmp_path / "gedackt-G2.wav"), str(tmp_path / "gedackt-C3.flac"),
                 "-t", "19 C"]) == 0
    out = capsys.readouterr().out
    entries = _entries(out)
    assert [e["note"] for e in entries] == ["G2", "C3"]
    assert entries[0]["temperature"] == "19 C"
    for entry, truth in zip(entries, (92.93, 123.9), strict=True):
        found = float(str(entry["frequency"]).split()[0])
        assert abs(1200 * math.log2(found / truth)) < 0.1
    assert "±0.01 cents" in out
    # Pasted into the spec, the rank calibrates to them.
    spec = (ROOT / "specs_examples" / "stopped-wood-gedackt.yaml").read_text(encoding="utf-8")
    head, _, _ = spec.partition("    measured:")
    pasted = head + "".join("    " + line + "\n" for line in out.splitlines())
    resolved = resolve(load_spec(pasted, "gedackt.yaml"))
    fit = resolved.groups[0].calibration
    assert fit.calibrated and [r.note for r in fit.residuals] == ["G2", "C3"]


def test_measure_note_length_json_and_file(tmp_path: Path,
                                           capsys: pytest.CaptureFixture[str]) -> None:
    write_pcm(tmp_path / "take-1.wav", signal(440.0 * 2 ** (-0.3 / 12)), 16)
    # No note anywhere: the nearest note, flagged.
    assert main(["measure", str(tmp_path / "take-1.wav"), "-t", "66 F"]) == 0
    out = capsys.readouterr().out
    assert "note: A4" in out and "note guessed from the pitch: check it" in out
    assert main(["measure", str(tmp_path / "take-1.wav"), "-t", "66 F", "--note", "Ab4",
                 "--length", "612.5 mm", "--json"]) == 0
    [found] = json.loads(capsys.readouterr().out)
    assert found["note"] == "G#4" and found["note_from"] == "--note"
    assert found["length"] == "612.5 mm"
    assert found["temperature_c"] == pytest.approx(18.89, abs=0.01)  # (66 − 32)·5/9
    assert found["encoding"] == "16-bit PCM" and found["channels"] == 1
    target = tmp_path / "measured.yaml"
    assert main(["measure", str(tmp_path / "take-1.wav"), "-t", "19 C", "--note", "A4",
                 "--length", "612.5 mm", "-o", str(target)]) == 0
    entry = _entries(target.read_text(encoding="utf-8"))[0]
    assert entry["length"] == "612.5 mm" and entry["note"] == "A4"
    assert f"wrote {target} (1 measured entry)" in capsys.readouterr().err
    assert main(["measure", str(tmp_path / "take-1.wav"), "-t", "19 C", "-o", str(target)]) == 2
    assert "already exists" in capsys.readouterr().err


def test_unusable_recordings_exit_1_and_write_nothing(tmp_path: Path,
                                                      capsys: pytest.CaptureFixture[str]) -> None:
    t = np.arange(2 * RATE) / RATE
    write_pcm(tmp_path / "G2.wav", signal(), 16)
    write_pcm(tmp_path / "silent.wav", np.zeros((RATE, 1)), 16)
    write_pcm(tmp_path / "clipped.wav",
              np.clip(3 * np.sin(2 * np.pi * 440 * t), -1, 1)[:, None], 16)
    write_pcm(tmp_path / "short.wav", signal(seconds=0.15), 16)
    (tmp_path / "notes.wav").write_text("not a recording")
    target = tmp_path / "out.yaml"
    names = ["G2", "silent", "clipped", "short", "notes"]
    code = main(["measure", *(str(tmp_path / f"{n}.wav") for n in names), "-t", "20 C",
                 "-o", str(target)])
    err = capsys.readouterr().err
    assert code == 1 and "Traceback" not in err and not target.exists()
    for name, words in (("silent", "silent"), ("clipped", "clipped"), ("short", "too short"),
                        ("notes", "not a WAV or FLAC file")):
        assert f"{tmp_path / name}.wav: error: {words}" in err
    assert err.count("    hint: ") == 4
    assert "4 of 5 recordings could not be used; nothing was written" in err


def test_usage_errors(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    write_pcm(tmp_path / "G2.wav", signal(), 16)
    wav = str(tmp_path / "G2.wav")
    assert main(["measure", wav]) == 2  # the temperature is required
    assert main(["measure", wav, "-t", "19"]) == 2
    assert main(["measure", wav, "-t", "19 C", "--note", "G2", "--note", "A2"]) == 2
    assert main(["measure", str(tmp_path / "nope.wav"), "-t", "19 C"]) == 2
    assert main(["measure", wav, "-t", "19 C", "--length", "600"]) == 2  # a length needs a unit
    err = capsys.readouterr().err
    assert "given 2 times for 1 recordings" in err and "no such file" in err
    assert "Traceback" not in err


def test_a_damaged_wav_is_refused_without_a_traceback(tmp_path: Path,
                                                      capsys: pytest.CaptureFixture[str]) -> None:
    # A RIFF/WAVE file whose first chunk claims more bytes than the file holds (a recorder
    # killed while writing, a file cut short by a copy): the RIFF layout (Microsoft 1991)
    # gives every chunk a 4-byte id and a 4-byte length.
    damaged = tmp_path / "G2.wav"
    damaged.write_bytes(b"RIFF" + struct.pack("<I", 1000) + b"WAVE" + b"junk"
                        + struct.pack("<I", 10**6) + b"\x00" * 16)
    assert main(["measure", str(damaged), "-t", "19 C"]) == 1
    err = capsys.readouterr().err
    assert f"{damaged}: error: a damaged WAV file" in err and "hint: export it again" in err
    assert "Traceback" not in err


def test_a_take_far_from_its_named_note_is_flagged(tmp_path: Path,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    # A file named G2 whose pipe sounded the octave (G3, twice the frequency: an overblown
    # pipe, or the wrong pipe) must not pass as a G2 quietly; a G2 some cents flat (a
    # prototype cut long) is no surprise. G2 = 440·2^(-26/12) Hz (ISO 16:1975, equal
    # temperament on A4 = 440 Hz).
    g2 = 440.0 * 2 ** (-26 / 12)
    write_pcm(tmp_path / "G2.wav", signal(2 * g2), 16)
    write_pcm(tmp_path / "rank-G2.wav", signal(g2 * 2 ** (-30 / 1200)), 16)
    assert main(["measure", str(tmp_path / "G2.wav"), str(tmp_path / "rank-G2.wav"),
                 "-t", "19 C"]) == 0
    octave, flat = capsys.readouterr().out.splitlines()[1:]
    assert "CHECK: +1200 cents from G2 (overblown?)" in octave
    assert "CHECK" not in flat
    assert main(["measure", str(tmp_path / "G2.wav"), "-t", "19 C", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)[0]["cents_from_note"] == pytest.approx(1200,
                                                                                    abs=0.5)


def test_an_overblown_stretch_is_reported_in_the_comment_and_json(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # A G2 take that overblew to its octave for its first 0.75 s, louder than its tone: the
    # stretch is left out and said so, not dropped unseen with the level.
    g2 = 440.0 * 2 ** (-26 / 12)
    t = np.arange(int(2.5 * RATE)) / RATE
    octave = 0.8 * np.sin(2 * np.pi * 2 * g2 * t)
    x = np.where(t < 0.75, octave, 0.6 * signal(g2)[:, 0])
    write_pcm(tmp_path / "G2.wav", x[:, None], 16)
    assert main(["measure", str(tmp_path / "G2.wav"), "-t", "19 C"]) == 0
    out = capsys.readouterr().out
    share = re.search(r"(\d+)% of it sounded an octave higher \(overblown\), left out", out)
    assert share and 27 <= int(share[1]) <= 33  # 0.75 s of 2.5 s
    found = float(str(_entries(out)[0]["frequency"]).split()[0])
    assert abs(1200 * math.log2(found / g2)) < 0.1
    assert main(["measure", str(tmp_path / "G2.wav"), "-t", "19 C", "--json"]) == 0
    [take] = json.loads(capsys.readouterr().out)
    assert take["other_pitch_share"] == pytest.approx(0.3, abs=0.03)
    assert take["other_pitch_ratio"] == pytest.approx(2.0, abs=0.01)


def test_a_pitch_that_never_settles_is_refused_with_a_hint(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # A tone gliding up 30 cents over the whole take: no settled pitch to measure.
    t = np.arange(int(2.5 * RATE)) / RATE
    phase = 2 * np.pi * np.cumsum(220.0 * 2 ** (30 * t / 2.5 / 1200)) / RATE
    write_pcm(tmp_path / "A3.wav", (0.4 * np.sin(phase))[:, None], 16)
    assert main(["measure", str(tmp_path / "A3.wav"), "-t", "19 C"]) == 1
    err = capsys.readouterr().err
    assert f"{tmp_path / 'A3.wav'}: error: the pitch never settled" in err
    assert "hint: record a longer steady note" in err


@pytest.mark.parametrize("floating", [False, True], ids=["pcm", "float"])
def test_a_wav_cut_short_is_measured_on_what_is_there_and_says_so(
        tmp_path: Path, capsys: pytest.CaptureFixture[str], floating: bool) -> None:
    # A recorder stopped while writing: the data chunk's header gives 2.5 s, the file holds
    # 1.5 s (RIFF layout, Microsoft 1991: the chunk's length is written before its bytes).
    wav = tmp_path / "G2.wav"
    if floating:
        write_riff(wav, signal(), 32, floating=True, extensible=False)
    else:
        write_pcm(wav, signal(), 16)
    whole = wav.read_bytes()
    block = 4 if floating else 2
    wav.write_bytes(whole[: len(whole) - RATE * block])  # the last second lost
    assert main(["measure", str(wav), "-t", "19 C"]) == 0
    out = capsys.readouterr().out
    assert "CHECK: the file is cut short (it ends after 1.50 s of the 2.50 s its header " \
           "announces); measured on what is there" in out
    found = float(str(_entries(out)[0]["frequency"]).split()[0])
    assert abs(1200 * math.log2(found / 92.93)) < 0.1
    assert main(["measure", str(wav), "-t", "19 C", "--json"]) == 0
    [take] = json.loads(capsys.readouterr().out)
    assert (take["duration_s"], take["announced_s"]) == (1.5, 2.5)
    # cut to 0.2 s, too little to measure: refused as damaged, as a chunk running past the
    # end of the file is
    wav.write_bytes(whole[: len(whole) - int(2.3 * RATE) * block])
    assert main(["measure", str(wav), "-t", "19 C"]) == 1
    err = capsys.readouterr().err
    assert f"{wav}: error: a damaged WAV file (it ends after 0.20 s of the 2.50 s its header " \
           "announces): too short" in err
    assert "hint: export it again" in err and "Traceback" not in err


def test_a_whole_wav_says_nothing_of_cuts(tmp_path: Path,
                                          capsys: pytest.CaptureFixture[str]) -> None:
    write_pcm(tmp_path / "G2.wav", signal(), 16)
    assert main(["measure", str(tmp_path / "G2.wav"), "-t", "19 C", "--json"]) == 0
    [take] = json.loads(capsys.readouterr().out)
    assert (take["duration_s"], take["announced_s"]) == (2.5, None)


def test_a_bad_note_is_a_usage_error(tmp_path: Path,
                                     capsys: pytest.CaptureFixture[str]) -> None:
    write_pcm(tmp_path / "take.wav", signal(), 16)
    target = tmp_path / "out.yaml"
    assert main(["measure", str(tmp_path / "take.wav"), "-t", "19 C", "--note", "H2",
                 "-o", str(target)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("boresmith: error: --note H2: ") and not target.exists()
