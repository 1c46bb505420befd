"""SEG-Y and pick-file writing, read back with segyio and raw bytes (SEG-Y rev 1, REFERENCES.md item 11)."""
import csv
import struct

import numpy as np
import pytest
import segyio

from pitfalls.model import Section
from pitfalls.modelling.segy_writer import textual_header, write_picks_csv, write_section_segy, write_volume_segy


def small_section(n_traces=3, n_samples=5, dt_ms=4.0, t0_ms=0.0):
    data = np.array([[1.0, 100.0, -118.625, 0.5, 0.0]] * n_traces, dtype=np.float32)[:, :n_samples]
    return Section(data=data, dt_ms=dt_ms, t0_ms=t0_ms, trace_spacing_m=12.5, trace_numbers=np.arange(1, n_traces + 1))


def test_two_trace_file_size_and_binary_header(tmp_path):
    """REFERENCES.md item 11: 2 traces x 5 samples, format 1 -> 4120 bytes; bytes 3217/3221/3225 = 4000/5/1."""
    path = write_section_segy(tmp_path / "two.sgy", small_section(2), inline_number=100, sample_format=1)
    raw = path.read_bytes()
    assert len(raw) == 3600 + 2 * (240 + 5 * 4) == 4120
    assert struct.unpack(">h", raw[3216:3218])[0] == 4000
    assert struct.unpack(">h", raw[3220:3222])[0] == 5
    assert struct.unpack(">h", raw[3224:3226])[0] == 1
    assert raw[3500] == 1 and raw[3501] == 0  # SEG-Y revision 1.0
    header = raw[3600:3840]
    assert struct.unpack(">i", header[188:192])[0] == 100
    assert struct.unpack(">i", header[192:196])[0] == 1
    assert struct.unpack(">h", header[70:72])[0] == -100
    assert struct.unpack(">h", header[114:116])[0] == 5
    assert struct.unpack(">h", header[116:118])[0] == 4000


def test_ibm_and_ieee_sample_bytes(tmp_path):
    """REFERENCES.md item 11 byte patterns: IBM 41100000 42640000 C276A000 40800000 00000000;
    IEEE 3F800000 42C80000 C2ED4000 3F000000 00000000."""
    ibm = write_section_segy(tmp_path / "ibm.sgy", small_section(1), sample_format=1).read_bytes()
    ieee = write_section_segy(tmp_path / "ieee.sgy", small_section(1), sample_format=5).read_bytes()
    assert ibm[3840:3860].hex() == "41100000" "42640000" "c276a000" "40800000" "00000000"
    assert ieee[3840:3860].hex() == "3f800000" "42c80000" "c2ed4000" "3f000000" "00000000"
    assert struct.unpack(">h", ieee[3224:3226])[0] == 5


def test_line_reads_back_with_segyio(tmp_path):
    """dt, t0, samples, trace order, inline/crossline, CDP X/Y with scalar -100 and the trace spacing."""
    rng = np.random.default_rng(0)
    data = rng.standard_normal((7, 50)).astype(np.float32)
    section = Section(data=data, dt_ms=2.0, t0_ms=100.0, trace_spacing_m=25.0, trace_numbers=np.arange(1, 8))
    path = write_section_segy(
        tmp_path / "line.sgy", section, inline_number=7, origin_x_m=1234.56, origin_y_m=-6543.21,
        azimuth_deg=90.0, sample_format=5, text_lines=["Invented test line"],
    )
    with segyio.open(str(path), ignore_geometry=True) as handle:
        assert segyio.tools.dt(handle) == 2000.0
        np.testing.assert_allclose(handle.samples, 100.0 + 2.0 * np.arange(50))
        np.testing.assert_array_equal(segyio.tools.collect(handle.trace[:]), data)
        for index in range(7):
            header = handle.header[index]
            assert header[segyio.TraceField.INLINE_3D] == 7
            assert header[segyio.TraceField.CROSSLINE_3D] == index + 1
            assert header[segyio.TraceField.DelayRecordingTime] == 100
            assert header[segyio.TraceField.TRACE_SAMPLE_INTERVAL] == 2000
            scalar = header[segyio.TraceField.SourceGroupScalar]
            assert scalar == -100
            x_m = header[segyio.TraceField.CDP_X] / abs(scalar)  # negative scalar: divide (SEG-Y rev 1)
            y_m = header[segyio.TraceField.CDP_Y] / abs(scalar)
            assert x_m == pytest.approx(1234.56 + 25.0 * index, abs=0.005)
            assert y_m == pytest.approx(-6543.21, abs=0.005)
        assert handle.text[0][:4] == b"C 1 "
        assert b"Invented test line" in handle.text[0]


def test_text_header_encodings(tmp_path):
    """REFERENCES.md item 11: EBCDIC starts C3 40 F1 40 ('C 1 ', codec cp037); ASCII starts 43 20 31 20."""
    ebcdic = write_section_segy(tmp_path / "e.sgy", small_section(1), text_lines=["Synthetic line"]).read_bytes()
    ascii_file = write_section_segy(tmp_path / "a.sgy", small_section(1), text_lines=["Synthetic line"], text_encoding="ascii").read_bytes()
    assert ebcdic[:4].hex() == "c340f140"
    assert ebcdic[:3200].decode("cp037").startswith("C 1 Synthetic line")
    assert ascii_file[:4] == b"C 1 "
    assert ascii_file[:3200] == textual_header(["Synthetic line"])
    assert ascii_file[3200:] == ebcdic[3200:]
    with pytest.raises(ValueError):
        textual_header(["caf\u00e9"])


def test_volume_grid_reads_back_structured(tmp_path):
    """3-D: segyio's structured open (iline 189, xline 193) finds the inline x crossline grid."""
    panels = [
        Section(data=np.full((4, 10), float(k), dtype=np.float32), dt_ms=4.0, t0_ms=0.0, trace_spacing_m=12.5,
                trace_numbers=np.arange(1, 5))
        for k in range(3)
    ]
    path = write_volume_segy(tmp_path / "cube.sgy", panels, [1001, 1002, 1003], [2001, 2002, 2003, 2004], sample_format=1)
    with segyio.open(str(path), iline=189, xline=193) as handle:
        np.testing.assert_array_equal(handle.ilines, [1001, 1002, 1003])
        np.testing.assert_array_equal(handle.xlines, [2001, 2002, 2003, 2004])
        cube = segyio.tools.cube(handle)
        assert cube.shape == (3, 4, 10)
        np.testing.assert_array_equal(cube[2], 2.0)
        last = handle.header[11]
        assert last[segyio.TraceField.CDP_X] / 100 == pytest.approx(500000.0 + 3 * 12.5)
        assert last[segyio.TraceField.CDP_Y] / 100 == pytest.approx(6000000.0 + 2 * 12.5)


def test_dead_trace_written_as_zeros(tmp_path):
    """A NaN-only trace is written as zeros with trace identification code 2 (dead)."""
    section = small_section(2)
    data = section.data.copy()
    data[1] = np.nan
    section = Section(data=data, dt_ms=4.0, t0_ms=0.0, trace_spacing_m=12.5, trace_numbers=np.arange(1, 3))
    path = write_section_segy(tmp_path / "dead.sgy", section)
    with segyio.open(str(path), ignore_geometry=True) as handle:
        assert np.all(handle.trace[1] == 0)
        assert handle.header[1][segyio.TraceField.TraceIdentificationCode] == 2
        assert handle.header[0][segyio.TraceField.TraceIdentificationCode] == 1


def test_failed_write_leaves_nothing_behind(tmp_path):
    """Whole or nothing: an error during writing leaves the old file and no temporary file."""
    target = tmp_path / "keep.sgy"
    target.write_bytes(b"old")
    with pytest.raises(ValueError):
        write_section_segy(target, small_section(1), text_lines=["x"] * 41)
    with pytest.raises(ValueError):
        write_section_segy(target, small_section(1), text_encoding="latin")
    assert target.read_bytes() == b"old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.sgy"]


def test_pick_file_columns(tmp_path):
    """Pick-file format: header row, horizon/trace/twt_ms/kind (2-D), inline/xline (3-D); NaN -> empty cell."""
    rows = [
        {"horizon": "A", "trace": 1, "twt_ms": 1000.0, "kind": "seafloor"},
        {"horizon": "A", "trace": 2, "twt_ms": float("nan"), "kind": "seafloor"},
        {"horizon": "B", "trace": 1, "twt_ms": 1234.5},
    ]
    path = write_picks_csv(tmp_path / "picks.csv", rows)
    with open(path, newline="") as handle:
        read = list(csv.reader(handle))
    assert read[0] == ["horizon", "trace", "twt_ms", "kind"]
    assert read[1] == ["A", "1", "1000.00", "seafloor"]
    assert read[2] == ["A", "2", "", "seafloor"]
    assert read[3] == ["B", "1", "1234.50", "horizon"]
    cube = write_picks_csv(tmp_path / "cube.csv", [{"horizon": "C", "inline": 5, "xline": 9, "twt_ms": 800.0, "kind": "contact"}])
    assert cube.read_text().splitlines() == ["horizon,inline,xline,twt_ms,kind", "C,5,9,800.00,contact"]
