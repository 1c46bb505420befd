"""The SEG-Y reader against files written with segyio, SEG-Y rev 1 (2002) header positions.

Byte positions and sample-format codes: SEG Technical Standards Committee, SEG Y rev 1
(2002); REFERENCES item 11 (verified).
"""
import os
import struct

import numpy as np
import pytest
import segyio

from pitfalls.errors import PitfallsInputError
from pitfalls.io.segy import SeismicFile, coordinate_scale
from segy_files import write_segy

RNG = np.random.default_rng(7)


def _ramp(n_traces=6, n_samples=50):
    return (np.arange(n_traces)[:, None] * 100 + np.arange(n_samples)[None, :] + RNG.normal(0, 0.25, (n_traces, n_samples))).astype(np.float32)


def test_two_d_header_values(tmp_path):
    """dt from binary header byte 3217 (microseconds), t0 from the delay recording time (byte 109),
    coordinates from bytes 181/185 with the scalar in byte 71 (SEG-Y rev 1)."""
    data = _ramp()
    path = write_segy(tmp_path / "line.sgy", data, dt_us=2000, delay_ms=100, coordinate_scalar=-100,
                      inlines=np.full(6, 7), xlines=np.arange(11, 17))
    with open(path, "rb") as raw:
        raw.seek(3216)
        assert struct.unpack(">h", raw.read(2))[0] == 2000  # byte 3217-3218, rev 1
    with SeismicFile(str(path), 25.0) as seismic:
        info = seismic.info
        assert (info.geometry, info.n_traces, info.n_samples) == ("2d", 6, 50)
        assert info.dt_ms == 2.0 and info.t0_ms == 100.0
        assert info.trace_spacing_m == pytest.approx(12.5, abs=0.011)  # scalar -100: centimetre rounding
        assert info.spacing_from_headers
        panel = next(seismic.panels())
        np.testing.assert_array_equal(panel.data, data)
        np.testing.assert_array_equal(panel.trace_numbers, np.arange(1, 7))


def test_coordinate_scalar_rule():
    """SEG-Y rev 1 byte 71: positive multiplies, negative divides; zero taken as one (rev 2, from memory)."""
    assert coordinate_scale(-100) == 0.01
    assert coordinate_scale(10) == 10.0
    assert coordinate_scale(0) == 1.0


def test_ibm_and_ieee_copies_give_the_same_samples(tmp_path):
    """Format 1 (IBM) and 5 (IEEE) of the same traces agree within IBM precision (REFERENCES item 11: relative 1e-6)."""
    data = _ramp() * 1.37
    ibm = write_segy(tmp_path / "ibm.sgy", data, sample_format=1)
    ieee = write_segy(tmp_path / "ieee.sgy", data, sample_format=5)
    with SeismicFile(str(ibm), 12.5) as a, SeismicFile(str(ieee), 12.5) as b:
        np.testing.assert_allclose(next(a.panels()).data, next(b.panels()).data, rtol=1e-6)


def test_ibm_bytes_of_one(tmp_path):
    """IBM float 1.0 is 41 10 00 00 (REFERENCES item 11, verified with raw bytes)."""
    path = write_segy(tmp_path / "one.sgy", np.ones((1, 3)), sample_format=1)
    with open(path, "rb") as raw:
        raw.seek(3600 + 240)
        assert raw.read(4) == bytes.fromhex("41100000")


def test_three_d_irregular_volume(tmp_path):
    """A 3 x 4 grid written crossline-major with one corner missing reads inline by inline, NaN where missing."""
    inline_numbers, xline_numbers = [100, 101, 102], [20, 22, 24, 26]
    positions = [(il, xl) for xl in xline_numbers for il in inline_numbers if (il, xl) != (102, 26)]
    data = np.array([[il + xl / 100.0] * 10 for il, xl in positions], dtype=np.float32)
    path = write_segy(tmp_path / "cube.sgy", data, inlines=[p[0] for p in positions], xlines=[p[1] for p in positions],
                      cdp_x=[1000.0 + 25.0 * (xl - 20) / 2 for _, xl in positions],
                      cdp_y=[2000.0 + 25.0 * (il - 100) for il, _ in positions])
    with SeismicFile(str(path), 12.5) as seismic:
        info = seismic.info
        assert (info.geometry, info.n_inlines, info.n_xlines, info.n_missing_traces) == ("3d", 3, 4, 1)
        assert info.trace_spacing_m == pytest.approx(12.5)
        panels = list(seismic.panels())
    assert [p.inline_number for p in panels] == inline_numbers
    np.testing.assert_array_equal(panels[0].trace_numbers, xline_numbers)
    assert panels[1].data[2, 0] == pytest.approx(101.24)
    assert np.isnan(panels[2].data[3]).all()


def test_one_inline_volume_is_a_line(tmp_path):
    path = write_segy(tmp_path / "one.sgy", _ramp(), inlines=np.full(6, 5), xlines=np.arange(1, 7))
    with SeismicFile(str(path), 12.5) as seismic:
        assert seismic.info.geometry == "2d"


def test_custom_header_bytes(tmp_path):
    """Inline/crossline numbers in other bytes (9 and 21 here) are read when named."""
    path = tmp_path / "odd.sgy"
    data = np.ones((4, 5), dtype=np.float32)  # live samples: an all-zero file is refused
    write_segy(path, data, inlines=[0, 0, 0, 0], xlines=[0, 0, 0, 0])
    with segyio.open(str(path), "r+", ignore_geometry=True) as handle:
        for index, (il, xl) in enumerate([(1, 1), (1, 2), (2, 1), (2, 2)]):
            handle.header[index] = {segyio.TraceField.FieldRecord: il, segyio.TraceField.CDP: xl}
    with SeismicFile(str(path), 12.5, iline_byte=9, xline_byte=21) as seismic:
        assert (seismic.info.geometry, seismic.info.n_inlines, seismic.info.n_xlines) == ("3d", 2, 2)


def test_interval_disagreement_is_noted(tmp_path):
    path = write_segy(tmp_path / "dt.sgy", _ramp(), dt_us=4000, trace_dt_us=2000)
    with SeismicFile(str(path), 12.5) as seismic:
        assert seismic.info.dt_ms == 4.0
        assert any("disagrees" in note for note in seismic.info.notes)


def test_missing_coordinates_use_fallback(tmp_path):
    path = write_segy(tmp_path / "nocoord.sgy", _ramp(), cdp_x=np.zeros(6), cdp_y=np.zeros(6))
    with SeismicFile(str(path), 30.0) as seismic:
        assert seismic.info.trace_spacing_m == 30.0 and not seismic.info.spacing_from_headers


def test_truncated_file_names_the_trace(tmp_path):
    path = write_segy(tmp_path / "cut.sgy", _ramp(6, 50))
    size = os.path.getsize(path)
    with open(path, "r+b") as handle:
        handle.truncate(size - 100)
    with pytest.raises(PitfallsInputError) as caught:
        SeismicFile(str(path), 12.5)
    assert "cut.sgy, trace 6: the file ends part-way through this trace" in str(caught.value)


def test_not_segy(tmp_path):
    path = tmp_path / "notes.sgy"
    path.write_text("horizon,trace,twt_ms\nH1,1,100\n")
    with pytest.raises(PitfallsInputError, match="notes.sgy"):
        SeismicFile(str(path), 12.5)


def test_real_line_both_ways(real_line_path):
    """The real line: IBM floats, ASCII textual header, one crossline of a 3-D survey (inline byte 189,
    crossline 193); 601 traces x 1501 samples at 4 ms from 0 ms; spacing about 12.5 m (its README)."""
    for force_2d in (False, True):
        with SeismicFile(real_line_path, 12.5, force_2d=force_2d) as seismic:
            info = seismic.info
            assert (info.geometry, info.n_traces, info.n_samples, info.dt_ms, info.t0_ms) == ("2d", 601, 1501, 4.0, 0.0)
            assert info.trace_spacing_m == pytest.approx(12.52, abs=0.05)
            panel = next(seismic.panels())
            assert panel.data.max() == pytest.approx(25805.0) and panel.data.min() == pytest.approx(-19918.0)
