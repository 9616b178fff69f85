"""A seeded structural fuzzer of design files at the command line (``pirchain check``).

Each case takes the demo design, parsed, and changes its structure: a value of another type,
an engineering-notation oddity, a deleted key or section, junk nested into a value, or an
attack on the bytes of the file (NUL, invalid UTF-8, a byte-order mark, truncation,
oversize, deep nesting, a 5 000-digit number). A rejected file must give exit 2 and exactly
one line on standard error naming a field; an accepted one must give JSON whose numbers are
all finite. Never exit 3 or a traceback (common practice for command-line tools: one
diagnostic per error, see the GNU Coding Standards, "Formatting Error Messages").
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import random
import tomllib

import pytest

from pirchain.interface.cli import main
from pirchain.interface.demo_text import DEMO_TOML

BASE = tomllib.loads(DEMO_TOML)
CASES = 520

ODD_NUMBERS = [
    "4k7k", "1e999", "1u5", "∞", "--1", "1 k", "1kΩΩ", "0x10", "1_000", "1e-400", "NaN",
    " 4k7 ", "١٢", "1e308k", "k", "", "1..5", "+-3", "10uFF", "3m3m", "1e+", "4,7k",
    "1/0", "-0", "1E6Ω", "47kohm", "2.2.2u", "1\u00a0k", "1e-30", "9" * 400,
]  # fmt: skip
JUNK = [
    None, True, False, 0, -1, 1e308, -1e308, math.nan, math.inf, -math.inf, 2**70, "x",
    [], [1, 2], {}, {"a": 1}, [[[]]], "4k7", 1.5, -0.0,
]  # fmt: skip


def toml_value(v) -> str:
    """One TOML value on one line (inline tables and arrays)."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, list):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{json.dumps(k)} = {toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(v)


def toml_text(data: dict) -> str:
    return "".join(f"{json.dumps(k)} = {toml_value(v)}\n" for k, v in data.items())


def _places(node, path=()):
    """Every (container, key) in the tree."""
    items = node.items() if isinstance(node, dict) else enumerate(node)
    for k, v in items:
        yield node, k, path + (k,)
        if isinstance(v, (dict, list)):
            yield from _places(v, path + (k,))


def _nest(v, rng):
    for _ in range(rng.randrange(1, 40)):
        v = [v] if rng.random() < 0.5 else {"x": v}
    return v


def mutate(rng: random.Random) -> bytes:
    data = json.loads(json.dumps(BASE))  # a deep copy
    places = list(_places(data))
    node, key, _path = rng.choice(places)
    op = rng.randrange(6)
    if op == 0:  # type swap
        node[key] = rng.choice(JUNK)
    elif op == 1:  # engineering-notation oddity
        node[key] = rng.choice(ODD_NUMBERS)
    elif op == 2:  # deleted key or section
        if isinstance(node, dict):
            del node[key]
        else:
            node.pop(key)
    elif op == 3:  # nested junk
        node[key] = _nest(node[key] if rng.random() < 0.5 else rng.choice(JUNK), rng)
    elif op == 4:  # two changes at once
        node[key] = rng.choice(JUNK + ODD_NUMBERS)
        n2, k2, _ = rng.choice(list(_places(data)))
        with contextlib.suppress(KeyError, IndexError, TypeError):
            n2[k2] = rng.choice(JUNK + ODD_NUMBERS)
    try:
        text = toml_text(data)
    except (TypeError, ValueError):
        text = DEMO_TOML  # None is not TOML: leave the key out instead
        text = text.replace("name =", "# name =", 1)
    raw = text.encode("utf-8")
    if op == 5:  # byte attacks
        kind = rng.randrange(8)
        i = rng.randrange(len(raw))
        raw = [
            raw[:i] + b"\x00" + raw[i:],
            raw[:i] + b"\xff\xfe" + raw[i:],
            b"\xef\xbb\xbf" + raw,
            raw[:i],
            raw + b"x = " + b"[" * 300 + b"]" * 300 + b"\n",
            raw + b"big = " + b"7" * 5000 + b"\n",
            raw.replace(b"\n", b"\r\n"),
            raw + b"pad = '" + b"a" * (1 << 20) + b"'\n",
        ][kind]
    return raw


def run_check(path):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(["check", str(path), "--json"])
    return code, out.getvalue(), err.getvalue()


def _finite(x):
    if isinstance(x, dict):
        return all(_finite(v) for v in x.values())
    if isinstance(x, list):
        return all(_finite(v) for v in x)
    if isinstance(x, float):
        return math.isfinite(x)
    return x is not None


@pytest.mark.parametrize("block", range(4))
def test_structural_fuzz_gives_one_line_or_finite_json(block, tmp_path):
    rng = random.Random(20261203 + block)
    accepted = rejected = 0
    for k in range(CASES // 4):
        path = tmp_path / f"case{k}.toml"
        path.write_bytes(mutate(rng))
        code, out, err = run_check(path)
        assert code in (0, 2), (k, code, err)
        assert "Traceback" not in err and "internal error" not in err, (k, err)
        if code == 2:
            lines = err.strip().splitlines()
            assert len(lines) == 1 and lines[0].startswith("pirchain: design error:"), (k, err)
            rejected += 1
        else:
            assert _finite(json.loads(out)), (k, out)
            accepted += 1
    assert rejected > CASES // 8 and accepted > 0, (accepted, rejected)


OPTION_JUNK = ["", "-1", "0", "1e309", "nan", "inf", "4k7", "1e-300", "abc", "3m", "∞", "1,2",
               "10000000", "--", "-0", "1e5", " ", "\u202e1", "1e-9"]  # fmt: skip
COMMAND_OPTIONS = {
    "walk": ["--distance", "--bearing", "--speed", "--kind"],
    "netlist": ["--walk-distance"],
    "false-triggers": [],
    "check": ["--seed"],
}


def test_seeded_bad_command_lines(tmp_path):
    # every command line either runs (exit 0) or is refused with one line (exit 2)
    rng = random.Random(81)
    for k in range(60):
        cmd = rng.choice(list(COMMAND_OPTIONS))
        argv = [cmd]
        for opt in rng.sample(COMMAND_OPTIONS[cmd], min(2, len(COMMAND_OPTIONS[cmd]))):
            argv += [f"{opt}={rng.choice(OPTION_JUNK)}"]
        if cmd == "netlist":
            argv += ["-o", str(tmp_path / f"n{k}.cir")]
        out, err = io.StringIO(), io.StringIO()
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            try:
                code = main(argv)
            except SystemExit as stop:
                code = stop.code
        lines = [ln for ln in err.getvalue().splitlines() if "warning" not in ln]
        assert code in (0, 2), (argv, err.getvalue())
        if code == 2:
            assert len(lines) == 1, (argv, err.getvalue())
