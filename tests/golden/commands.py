"""The command lines whose seeded outputs are recorded in this folder.

Each entry: (name, arguments after ``pirchain``, files the command writes). ``make.py``
runs them and stores the outputs as ``<name>.json`` (standard output) and
``<name>.<file>`` (written files); ``tests/test_golden.py`` runs them again and compares.
The records' history (first made before the single-engine rework, re-recorded for the
intended changes of issues 12, 13, 18 and 19) is in ``tests/test_golden.py``.
"""

COMMANDS = (
    ("check", ["check", "--json"], ()),
    ("walk_8m", ["walk", "--json", "--csv", "{out}/walk.csv"], ("walk.csv",)),
    (
        "walk_20m",
        ["walk", "--json", "--distance", "20", "--csv", "{out}/walk.csv"],
        ("walk.csv",),
    ),
    (
        "walk_radial_3m",
        ["walk", "--json", "--distance", "3", "--kind", "radial", "--csv", "{out}/walk.csv"],
        ("walk.csv",),
    ),
    (
        "netlist_10m",
        ["netlist", "--json", "-o", "{out}/chain.cir", "--walk-distance", "10"],
        ("chain.cir",),
    ),
    ("range", ["range", "--json"], ()),
    ("sweep", ["sweep", "--json"], ()),
    ("false_triggers", ["false-triggers", "--json", "--mc-hours", "1"], ()),
    ("report", ["report", "--json", "-o", "{out}/report.html"], ()),
)
