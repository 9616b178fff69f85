"""The ``pirchain`` command's entry point: imports the command line inside a guard, so that
Ctrl-C while the numerical libraries load ends quietly (exit 130, no traceback)."""

from __future__ import annotations

import sys

EXIT_INTERRUPTED = 130  # 128 + SIGINT, the shell's convention


def main(argv=None) -> int:
    """Run the command line (see :func:`pirchain.interface.cli.main`)."""
    try:
        from .cli import main as run

        return run(argv)
    except KeyboardInterrupt:
        print("pirchain: interrupted; nothing half-written was left", file=sys.stderr)
        return EXIT_INTERRUPTED


if __name__ == "__main__":
    sys.exit(main())
