"""Compiler options shared by the numba kernels.

``fastmath={"contract"}`` lets the compiler fuse a multiply and an add into one
instruction (one rounding instead of two); no other IEEE-754 rule is relaxed (NaN and
infinity handling, signed zeros and the order of operations stay as written).
``error_model="numpy"`` makes a division by zero give inf/NaN as numpy does instead of
raising, which keeps the loops free of checks so that they vectorise.
"""

FMA = {"contract"}
JIT = {"cache": True, "error_model": "numpy", "fastmath": FMA}
