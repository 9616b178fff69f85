"""Reading bench captures (issue 15, import part): real files with headers, offsets, scales
and other sample rates are read; broken ones give one error naming the file, line and column.
The reference for the clean case is the waveform written (numpy's own CSV and .npy writers,
``numpy.savetxt`` and ``numpy.save``); the resampling is checked against ``numpy.interp``'s
definition on a linear ramp (exact)."""

import numpy as np
import pytest

from pirchain.errors import DesignError
from pirchain.interface.capture_file import read_capture


def scope_csv(tmp_path, body, name="cap.csv"):
    p = tmp_path / name
    p.write_text(body, encoding="utf-8")
    return p


def test_a_scope_file_with_header_offset_and_millivolts(tmp_path):
    t = 12.5 + np.arange(400) / 250.0  # starts at 12.5 s, 250 Hz
    v = 800.0 + 30.0 * np.sin(2 * np.pi * 1.3 * (t - 12.5))  # mV, with a DC level
    lines = ["Model,BenchScope", "Sample rate,250", "Time (s);CH1 (mV)"]
    lines += [f"{a:.6f};{b:.6f}" for a, b in zip(t, v, strict=True)]
    cap = read_capture(scope_csv(tmp_path, "\n".join(lines) + "\n"), "comparator", scale=1e-3)
    assert cap.columns == ("Time (s)", "CH1 (mV)")
    assert cap.t0 == pytest.approx(12.5)
    assert cap.time[0] == 0.0 and cap.sample_rate == pytest.approx(250.0)
    np.testing.assert_allclose(cap.value, v * 1e-3, rtol=1e-9)
    # onto the model's 100 Hz grid: linear interpolation is exact on a ramp
    ramp = scope_csv(tmp_path, "\n".join(f"{k / 250} {2.0 * k / 250}" for k in range(300)),
                     "ramp.txt")  # fmt: skip
    r = read_capture(ramp, "stage1").resampled(100.0)
    np.testing.assert_allclose(r, 2.0 * np.arange(r.size) / 100.0, atol=1e-12)


def test_npy_and_savetxt_round_trip(tmp_path):
    data = np.column_stack([np.arange(50) / 100.0, np.cos(np.arange(50) / 7.0)])
    np.save(tmp_path / "c.npy", data)
    np.savetxt(tmp_path / "c.csv", data, delimiter=",", header="t,v")
    for name in ("c.npy", "c.csv"):
        cap = read_capture(tmp_path / name, "source")
        np.testing.assert_allclose(cap.value, data[:, 1], rtol=1e-12)


@pytest.mark.parametrize(
    ("body", "where", "what"),
    [
        ("0,1\n0.1,2\n0.2,abc\n" + "".join(f"{k},1\n" for k in range(1, 9)), ":3 column 2",
         "a number"),
        ("0,1\n0.2,2\n0.1,3\n" + "".join(f"{k},1\n" for k in range(1, 9)), ":3 column 1",
         "time must increase"),
        ("0,1\n0.1,nan\n" + "".join(f"{k},1\n" for k in range(1, 9)), ":2 column 2",
         "finite"),
        ("0,1\n0.1,\n" + "".join(f"{k},1\n" for k in range(1, 9)), ":2 column 2", "a number"),
        ("".join(f"{k}\n" for k in range(20)), "cap.csv:1", "a time and a value column"),
        ("time,value\n", "cap.csv", "rows of time and value"),
        ("", "cap.csv", "rows of time and value"),
    ],
)  # fmt: skip
def test_broken_captures_name_file_line_and_column(tmp_path, body, where, what):
    with pytest.raises(DesignError) as err:
        read_capture(scope_csv(tmp_path, body), "comparator")
    msg = str(err.value)
    assert where in msg and what in msg and "\n" not in msg


def test_files_that_are_not_captures(tmp_path):
    with pytest.raises(DesignError, match="regular file"):
        read_capture("/dev/zero", "comparator")
    # a .npy header claiming ~2 GB of samples is refused before anything is read
    p = tmp_path / "huge.npy"
    with open(p, "wb") as fh:
        np.lib.format.write_array_header_1_0(
            fh, {"descr": "<f8", "fortran_order": False, "shape": (134_217_728, 2)}
        )
    with pytest.raises(DesignError, match="at most"):
        read_capture(p, "comparator")
    with pytest.raises(DesignError, match="capture.node"):
        read_capture(p, "antenna")
    with pytest.raises(DesignError, match="capture.scale"):
        read_capture(p, "comparator", scale=0.0)
