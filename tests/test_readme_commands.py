"""The README's two commands work pasted verbatim, as root on a machine without sudo and as
a user with sudo (the brief's rule). The commands run in ``sh`` against stand-in programs
that record their arguments, so what would be executed is checked without installing.

Source: POSIX ``command -v`` (The Open Group Base Specifications, Shell Command Language),
which prints nothing and fails when a program is missing; minimal Debian images run as root
without sudo (common practice)."""

import pathlib
import re
import stat
import subprocess

ROOT = pathlib.Path(__file__).resolve().parent.parent


def readme_commands():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    return re.findall(r"```sh\n(.*?)\n```", text, re.S)[:2]


def run_with_stubs(command, tmp_path, with_sudo):
    bin_dir = tmp_path / "bin"
    bin_dir.mkdir()
    log = tmp_path / "log"
    names = ["apt-get", "python3", "pirchain"] + (["sudo"] if with_sudo else [])
    for name in names:
        body = f'echo "{name} $*" >> {log}\n'
        if name == "sudo":
            body += '"$@"\n'
        path = bin_dir / name
        path.write_text("#!/bin/sh\n" + body, encoding="utf-8")
        path.chmod(path.stat().st_mode | stat.S_IEXEC)
    # only the stand-ins are on the PATH: the commands need nothing else but shell builtins
    proc = subprocess.run(
        ["/bin/sh", "-c", command], env={"PATH": str(bin_dir)}, capture_output=True, text=True
    )
    return proc, log.read_text(encoding="utf-8").splitlines() if log.exists() else []


def test_main_command_installs_and_runs_the_demo(tmp_path):
    main, _ = readme_commands()
    proc, calls = run_with_stubs(main, tmp_path, with_sudo=False)
    assert proc.returncode == 0, proc.stderr
    assert calls == ["python3 -m pip install .", "pirchain "]


def test_test_command_as_root_without_sudo(tmp_path):
    _, tests = readme_commands()
    proc, calls = run_with_stubs(tests, tmp_path, with_sudo=False)
    assert proc.returncode == 0, proc.stderr
    assert calls == [
        "apt-get update -qq",
        "apt-get install -y ngspice",
        "python3 -m pip install .[test]",
        "python3 -m pytest",
    ]


def test_test_command_as_a_user_with_sudo(tmp_path):
    _, tests = readme_commands()
    proc, calls = run_with_stubs(tests, tmp_path, with_sudo=True)
    assert proc.returncode == 0, proc.stderr
    assert calls[:2] == ["sudo apt-get update -qq", "apt-get update -qq"]
    assert "sudo apt-get install -y ngspice" in calls and calls[-1] == "python3 -m pytest"
