"""Reference: DESIGN.md §8 (reliability).

The design-file loader under seeded random mutation of the demo file: every result is a
valid design or a DesignError with a key path — never another exception (and so never a
traceback at the command line)."""

import random

import pytest

from pirchain.errors import DesignError
from pirchain.interface.cli import main
from pirchain.interface.demo_text import DEMO_TOML
from pirchain.interface.design_file import loads

JUNK = [
    '"x"',
    "-1",
    "0",
    "1e308",
    "-1e308",
    "nan",
    "inf",
    '"4k7"',
    '"10uF"',
    "true",
    "[]",
    "[1, 2]",
    "{}",
    '"∞"',
    '""',
    '"1e-30"',
    "3.3",
    '"-0"',
    "99999999999999999999",
]


def mutations(seed: int, n: int):
    rng = random.Random(seed)
    lines = DEMO_TOML.splitlines()
    for _ in range(n):
        m = list(lines)
        op = rng.randrange(5)
        i = rng.randrange(len(m))
        if op == 0:
            del m[i]
        elif op == 1 and "=" in m[i]:
            key = m[i].split("=", 1)[0]
            m[i] = f"{key}= {rng.choice(JUNK)}"
        elif op == 2:
            m.insert(i, m[rng.randrange(len(m))])
        elif op == 3 and m[i]:
            j = rng.randrange(len(m[i]))
            m[i] = m[i][:j] + rng.choice("xz[]{}=\"'#.5-") + m[i][j + 1 :]
        else:
            m[i] = m[i].replace("k", "K", 1).replace("u", "µ", 1)
        yield "\n".join(m) + "\n"


@pytest.mark.parametrize("seed", range(6))
def test_mutated_files_never_raise_anything_but_design_errors(seed):
    ok = bad = 0
    for text in mutations(seed, 60):
        try:
            loads(text)
            ok += 1
        except DesignError as err:
            assert err.field and str(err)
            bad += 1
    assert ok + bad == 60 and bad > 0


def test_mutated_files_at_the_command_line(tmp_path, capsys):
    for k, text in enumerate(mutations(99, 12)):
        path = tmp_path / f"m{k}.toml"
        path.write_text(text, encoding="utf-8")
        code = main(["check", str(path)])
        err = capsys.readouterr().err
        assert code in (0, 2), err
        assert "Traceback" not in err and "internal error" not in err
