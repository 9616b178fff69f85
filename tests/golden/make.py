"""Record the outputs of ``commands.COMMANDS`` into this folder (run from the repo root).

python3 tests/golden/make.py
"""

import contextlib
import io
import os
import shutil
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

from commands import COMMANDS  # noqa: E402

from pirchain.interface.cli import main  # noqa: E402


def run(args, out_dir):
    buf = io.StringIO()
    argv = [a.format(out=out_dir) for a in args]
    with contextlib.redirect_stdout(buf), contextlib.redirect_stderr(io.StringIO()):
        code = main(argv)
    if code != 0:
        raise SystemExit(f"pirchain {' '.join(argv)} exited {code}")
    return buf.getvalue()


if __name__ == "__main__":
    for name, args, files in COMMANDS:
        with tempfile.TemporaryDirectory() as tmp:
            text = run(args, tmp)
            with open(os.path.join(HERE, f"{name}.json"), "w", encoding="utf-8") as fh:
                fh.write(text)
            for f in files:
                shutil.copy(os.path.join(tmp, f), os.path.join(HERE, f"{name}.{f}"))
        print("recorded", name)
