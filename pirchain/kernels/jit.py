"""Compiler options shared by the numba kernels, and the wrapper that compiles a domain
module's plain scalar rule function into them.

``fastmath={"contract"}`` lets the compiler fuse a multiply and an add into one
instruction (one rounding instead of two); no other IEEE-754 rule is relaxed (NaN and
infinity handling, signed zeros and the order of operations stay as written).
``error_model="numpy"`` makes a division by zero give inf/NaN as numpy does instead of
raising, which keeps the loops free of checks so that they vectorise.
"""

import types

import numba

FMA = {"contract"}
JIT = {"cache": True, "error_model": "numpy", "fastmath": FMA}
INLINE = {"inline": "always", "error_model": "numpy", "fastmath": FMA}


def rule(func):
    """Compile a domain module's scalar rule function for use inside the kernels (inlined).

    The function stays written once, in its domain module, where Python code calls it too.
    """
    return numba.njit(**INLINE)(func)


def rule_calling(func, **rules):
    """:func:`rule` for a rule function that calls other rule functions of its module: the
    names in ``rules`` (already compiled with :func:`rule`) replace the plain functions it
    would otherwise call."""
    glb = dict(func.__globals__)
    glb.update(rules)
    copy = types.FunctionType(func.__code__, glb, func.__name__, func.__defaults__,
                              func.__closure__)  # fmt: skip
    return rule(copy)
