"""Rate coefficients written as arithmetic formulas: a safe parser and a compiled evaluator.

A mechanism reaction may give its rate coefficient as a formula, for example::

    rate: {expression: "2.3e-17 * (Tg/300)**-0.5 * exp(-Te/11600)"}

Grammar
-------
The formula is read with Python's :mod:`ast` parser (``mode="eval"``) and every node is
checked against a strict whitelist; nothing of the text is ever executed (no ``eval``,
``exec``, no code objects, no attribute look-up of user names, no generated source).
Allowed are

* numeric literals (integers and floats, also ``1e-16``, ``1_000``, ``0x10``); they are
  read as float64 and must be finite,
* the variables of :data:`EXPRESSION_VARIABLES`:

  ``Tg``
      gas temperature in K,
  ``Te``
      electron temperature in K, defined as 2/3 of the mean electron energy,
      ``Te = (2/3) * mean_energy_eV * e / k_B`` (about 7736.3 K per eV of mean energy),
  ``E_N_Td``
      reduced electric field in Td (1 Td = 1e-21 V m2),
  ``mean_energy_eV``
      mean electron energy in eV,

* binary ``+ - * / **`` and unary ``-`` and ``+`` with Python's precedence and
  associativity (``**`` binds tighter than a unary minus on its left and groups from the
  right: ``-2**2 == -4``, ``2**3**2 == 512``), parentheses,
* the functions ``exp``, ``log`` (natural logarithm), ``sqrt`` (one argument each) and
  ``min``, ``max`` (two or more arguments).

Everything else (other names, attribute access, subscripts, strings, comparisons,
lambdas, comprehensions, keyword or starred arguments, ``:=``, other operators...) is
rejected with :class:`plasmazero.data.errors.InputError`, one line naming the file, the
line, the entry, the column in the formula and what is not allowed. Formulas are capped at
:data:`MAX_LENGTH` characters, :data:`MAX_DEPTH` levels of nesting and
:data:`MAX_STACK` evaluation-stack slots. Line breaks in the text (YAML folded scalars)
are read as spaces; leading white space is ignored; only ASCII characters are accepted
(a pasted unicode minus sign or multiplication sign is reported with its column).

Constant folding: every sub-formula without variables is evaluated once at compile time
with the same IEEE-754 rules as the kernel. A constant part that is not finite (for
example ``log(0)``, ``sqrt(-1)``, ``exp(1000)``) and a division by a constant zero are
rejected as input errors, since they can never give a usable rate.

Non-finite results at run time
------------------------------
A formula that is well formed may still give nan or inf at some state (``log(Tg - 400)``
at 300 K, ``exp(Te)`` at high Te): that is *not* a parse error. The kernel follows
IEEE-754 and never raises for it: ``x/0`` gives +-inf or nan, ``log(0)`` gives -inf,
``log`` and ``sqrt`` of a negative number give nan, overflow gives inf, ``a**b`` follows
the C library ``pow``. ``min`` and ``max`` return nan when any argument is nan. The
mechanism layer checks the values it gets.

Program format
--------------
:func:`compile_expression` returns ``(code, consts)``:

``code``
    1-D ``int64`` array of ``2 * n`` words holding ``n`` instructions for a stack machine.
    Instruction ``k`` is the word pair ``(code[2k], code[2k+1]) = (opcode, argument)``;
    the argument word is 0 for opcodes that do not use it.
``consts``
    1-D ``float64`` array of the literal values (after folding) the program pushes.

Opcodes (module constants ``OP_*``):

====  ==========  ========================================================
code  name        effect (``a`` below ``b`` on the stack; ``b`` is the top)
====  ==========  ========================================================
1     OP_CONST    push ``consts[cstart + argument]``
2     OP_VAR      push ``variables[argument]`` (index into EXPRESSION_VARIABLES)
3     OP_NEG      replace top ``b`` by ``-b``
4     OP_EXP      replace top ``b`` by ``exp(b)``
5     OP_LOG      replace top ``b`` by ``log(b)``
6     OP_SQRT     replace top ``b`` by ``sqrt(b)``
7     OP_ADD      pop ``b``, replace ``a`` by ``a + b``
8     OP_SUB      pop ``b``, replace ``a`` by ``a - b``
9     OP_MUL      pop ``b``, replace ``a`` by ``a * b``
10    OP_DIV      pop ``b``, replace ``a`` by ``a / b``
11    OP_POW      pop ``b``, replace ``a`` by ``a ** b``
12    OP_MIN      pop ``b``, replace ``a`` by ``min(a, b)``
13    OP_MAX      pop ``b``, replace ``a`` by ``max(a, b)``
====  ==========  ========================================================

Opcode 0 is never used, so a zero-filled array is not a valid program. A program starts
with an empty stack and ends with exactly one value, the result. ``min``/``max`` with
``n`` arguments compile to ``n - 1`` two-argument instructions. The stack never holds
more than :data:`MAX_STACK` values; this is checked by the compiler.

Constant indices are *relative* to the first constant of the program, so several programs
concatenate without relocation: put the ``code`` arrays one after the other and the
``consts`` arrays one after the other, and keep per program the offset ``start`` of its
first code word, its ``length`` in code words and the offset ``cstart`` of its first
constant. :func:`concatenate_programs` does exactly this, and
``eval_expression_at(code, consts, start, length, cstart, variables)`` evaluates one
program of the concatenation; ``eval_expression(code, consts, variables)`` evaluates a
single program. Both are numba kernels (``cache=True``) without Python objects.

References
----------
The evaluation scheme is the classic postfix (reverse Polish) evaluation on a stack,
Bauer, F. L. and Samelson, K. (1960), "Sequential formula translation", Communications
of the ACM 3(2), 76-83. Floating-point semantics: IEEE Standard for Floating-Point
Arithmetic, IEEE Std 754-2008.
"""

from __future__ import annotations

import ast
import math
import warnings

import numpy as np
from numba import njit

from plasmazero.data.errors import InputError, format_problem

#: Variables a formula may use, in the order of the ``variables`` array of the kernels.
EXPRESSION_VARIABLES = ("Tg", "Te", "E_N_Td", "mean_energy_eV")

#: Functions a formula may call, with (minimum, maximum) number of arguments.
EXPRESSION_FUNCTIONS = {"exp": (1, 1), "log": (1, 1), "sqrt": (1, 1), "min": (2, None), "max": (2, None)}

#: Longest formula accepted, in characters.
MAX_LENGTH = 1000
#: Deepest nesting of sub-expressions accepted (a leaf alone has depth 1).
MAX_DEPTH = 100
#: Evaluation-stack slots of the kernel; the compiler rejects programs needing more.
MAX_STACK = 32

OP_CONST = 1
OP_VAR = 2
OP_NEG = 3
OP_EXP = 4
OP_LOG = 5
OP_SQRT = 6
OP_ADD = 7
OP_SUB = 8
OP_MUL = 9
OP_DIV = 10
OP_POW = 11
OP_MIN = 12
OP_MAX = 13

_VARIABLE_INDEX = {name: i for i, name in enumerate(EXPRESSION_VARIABLES)}
_FUNCTION_OP = {"exp": OP_EXP, "log": OP_LOG, "sqrt": OP_SQRT, "min": OP_MIN, "max": OP_MAX}
_BINARY_OP = {ast.Add: OP_ADD, ast.Sub: OP_SUB, ast.Mult: OP_MUL, ast.Div: OP_DIV, ast.Pow: OP_POW}
_OPERATOR_TEXT = {
    "FloorDiv": "'//'", "Mod": "'%'", "MatMult": "'@'", "LShift": "'<<'", "RShift": "'>>'",
    "BitOr": "'|'", "BitXor": "'^' (write powers as a**b)", "BitAnd": "'&'", "Not": "'not'",
    "Invert": "'~'",
}
_NODE_TEXT = {
    "Attribute": "attribute access is not allowed",
    "Subscript": "subscripts (indexing with [...]) are not allowed",
    "Slice": "slices are not allowed",
    "Lambda": "lambda functions are not allowed",
    "ListComp": "comprehensions are not allowed",
    "SetComp": "comprehensions are not allowed",
    "DictComp": "comprehensions are not allowed",
    "GeneratorExp": "comprehensions are not allowed",
    "JoinedStr": "f-strings are not allowed",
    "FormattedValue": "f-strings are not allowed",
    "NamedExpr": "assignment expressions (:=) are not allowed",
    "Starred": "starred arguments are not allowed",
    "List": "lists are not allowed",
    "Tuple": "tuples (values separated by commas) are not allowed",
    "Set": "sets are not allowed",
    "Dict": "dictionaries are not allowed",
    "Compare": "comparisons are not allowed",
    "BoolOp": "'and' and 'or' are not allowed",
    "IfExp": "conditional expressions (x if c else y) are not allowed",
    "Await": "'await' is not allowed",
    "Yield": "'yield' is not allowed",
    "YieldFrom": "'yield' is not allowed",
}


# --------------------------------------------------------------------------- IEEE helpers
# Plain-Python versions of the kernel's operations, used for constant folding and by the
# reference evaluator. They call the same C library functions (through :mod:`math`) as the
# numba kernel does and return IEEE-754 special values where :mod:`math` would raise.


def _ieee_div(a, b):
    """``a / b`` with IEEE-754 results for a zero divisor (IEEE Std 754-2008, 7.3)."""
    if b == 0.0:
        if a == 0.0 or math.isnan(a):
            return math.nan
        return math.copysign(math.inf, a) * math.copysign(1.0, b)
    return a / b


def _ieee_pow(a, b):
    """``a ** b`` as the C library ``pow`` (C99 Annex F.9.4.4) gives it, never complex."""
    try:
        return math.pow(a, b)
    except (OverflowError, ValueError):
        with np.errstate(all="ignore"):
            return float(np.power(np.float64(a), np.float64(b)))


def _ieee_exp(x):
    """``exp(x)``; inf on overflow (C99 Annex F.9.3.1)."""
    try:
        return math.exp(x)
    except OverflowError:
        return math.inf


def _ieee_log(x):
    """Natural ``log(x)``; -inf at 0 and nan below 0 (C99 Annex F.9.3.7)."""
    if x > 0.0:
        return math.log(x)
    if x == 0.0:
        return -math.inf
    return math.nan


def _ieee_sqrt(x):
    """``sqrt(x)``; nan below 0 (IEEE Std 754-2008, 5.4.1)."""
    return math.sqrt(x) if x >= 0.0 else math.nan


def _nan_min(a, b):
    """Smaller of ``a`` and ``b``; nan if either is nan (common practice, no source)."""
    if math.isnan(a) or math.isnan(b):
        return math.nan
    return a if a < b else b


def _nan_max(a, b):
    """Larger of ``a`` and ``b``; nan if either is nan (common practice, no source)."""
    if math.isnan(a) or math.isnan(b):
        return math.nan
    return a if a > b else b


_PY_UNARY = {OP_NEG: lambda x: -x, OP_EXP: _ieee_exp, OP_LOG: _ieee_log, OP_SQRT: _ieee_sqrt}
_PY_BINARY = {
    OP_ADD: lambda a, b: a + b, OP_SUB: lambda a, b: a - b, OP_MUL: lambda a, b: a * b,
    OP_DIV: _ieee_div, OP_POW: _ieee_pow, OP_MIN: _nan_min, OP_MAX: _nan_max,
}


# --------------------------------------------------------------------------- parsing


class _Where:
    """Where a formula came from, to build one-line :class:`InputError` messages."""

    def __init__(self, text, offset, file, entry, line):
        self.text = text
        self.offset = offset
        self.file = file
        self.entry = entry
        self.line = line

    def fail(self, problem, node=None, column=None):
        """Raise the :class:`InputError` for ``problem`` at ``node`` (or 1-based ``column``)."""
        if isinstance(node, ast.expr):
            column = _char_column(self.text, node.col_offset)
        head = f"rate expression {_excerpt(self.text)}"
        if column is not None:
            head = f"{head}, column {column + self.offset}"
        one_line = f"{head}: {' '.join(problem.split())}"
        raise InputError([format_problem(self.file, self.entry, one_line, self.line)])


def _char_column(text, byte_offset):
    """1-based character column of a UTF-8 ``byte_offset`` in one-line ``text``."""
    return len(text.encode("utf-8")[:byte_offset].decode("utf-8", "ignore")) + 1


def _excerpt(text, limit=60):
    """Short one-line quotation of ``text`` for messages."""
    shown = text if len(text) <= limit else text[: limit - 3] + "..."
    return repr(shown)


def _name(name, limit=30):
    """Quoted user name for messages, shortened when long."""
    return _excerpt(name, limit)


def _prepare(text, file, entry, line):
    """Check type and length of ``text``; return (one-line stripped text, where)."""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        text = repr(float(text))
    if not isinstance(text, str):
        raise InputError([format_problem(
            file, entry, f"rate expression must be a text string, got {type(text).__name__}", line)])
    if len(text) > MAX_LENGTH:
        _Where(text[:MAX_LENGTH], 0, file, entry, line).fail(
            f"expression too long ({len(text)} characters, at most {MAX_LENGTH})")
    flat = text.replace("\r", " ").replace("\n", " ")
    stripped = flat.lstrip()
    where = _Where(stripped, len(flat) - len(stripped), file, entry, line)
    if not stripped.strip():
        where.fail("expression is empty")
    for i, ch in enumerate(stripped):
        if ord(ch) > 127:
            where.fail(f"character {ch!r} (U+{ord(ch):04X}) is not allowed; write formulas in ASCII",
                       column=i + 1)
    return stripped, where


def _parse(text, file=None, entry=None, line=None):
    """Parse ``text`` into a checked-depth :class:`ast.Expression`; return (tree, where)."""
    text, where = _prepare(text, file, entry, line)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            tree = ast.parse(text, mode="eval")
    except SyntaxError as exc:
        offset = exc.offset if isinstance(exc.offset, int) else 0
        if 0 < offset <= len(text):
            where.fail(f"syntax error: {exc.msg}", column=offset)
        where.fail(f"syntax error at the end of the expression: {exc.msg}")
    except (ValueError, MemoryError, RecursionError, OverflowError) as exc:
        where.fail(f"cannot be parsed ({type(exc).__name__})")
    depth = _depth(tree.body)
    if depth > MAX_DEPTH:
        where.fail(f"expression too deep (nesting deeper than {MAX_DEPTH} levels)")
    return tree, where


def _depth(root):
    """Nesting depth of expression nodes below ``root`` (iterative, stops past the cap)."""
    best = 0
    todo = [(root, 1)]
    while todo:
        node, depth = todo.pop()
        best = max(best, depth)
        if best > MAX_DEPTH:
            break
        for child in ast.iter_child_nodes(node):
            todo.append((child, depth + 1 if isinstance(child, ast.expr) else depth))
    return best


def _literal(node, where):
    """Float value of an :class:`ast.Constant`, or an input error for non-numbers."""
    value = node.value
    if isinstance(value, bool):
        where.fail("True and False are not allowed", node)
    if value is None:
        where.fail("None is not allowed", node)
    if isinstance(value, str):
        where.fail("strings are not allowed", node)
    if isinstance(value, bytes):
        where.fail("byte strings are not allowed", node)
    if isinstance(value, complex):
        where.fail("complex numbers are not allowed", node)
    if not isinstance(value, (int, float)):
        where.fail(f"constant {type(value).__name__} is not allowed", node)
    try:
        number = float(value)
    except OverflowError:
        number = math.inf
    if not math.isfinite(number):
        where.fail("number out of the float64 range", node)
    return number


def _describe(node):
    """Why ``node`` (of a kind outside the whitelist) is not allowed."""
    name = type(node).__name__
    return _NODE_TEXT.get(name, f"{name} is not allowed")


class _Part:
    """A compiled sub-formula: a folded constant or postfix instructions with stack need.

    ``items`` is a list of ``(opcode, argument)``; for ``OP_CONST`` the argument is the
    float value itself until :func:`_assemble` turns it into an index.
    """

    __slots__ = ("value", "items", "need")

    def __init__(self, value=None, items=None, need=1):
        self.value = value
        self.items = items
        self.need = need

    @property
    def is_const(self):
        return self.items is None

    def code(self):
        return [(OP_CONST, self.value)] if self.items is None else self.items


def _folded(value, node, where):
    if not math.isfinite(value):
        where.fail(f"constant part evaluates to {value} "
                   "(overflow or outside the domain of a function)", node)
    return _Part(value=value)


def _lower(node, where):
    """Compile one whitelisted node to a :class:`_Part`; input error for anything else."""
    if isinstance(node, ast.Constant):
        return _Part(value=_literal(node, where))
    if isinstance(node, ast.Name):
        if node.id in _VARIABLE_INDEX:
            return _Part(items=[(OP_VAR, _VARIABLE_INDEX[node.id])])
        if node.id in EXPRESSION_FUNCTIONS:
            where.fail(f"function {node.id!r} must be called, as in {node.id}(x)", node)
        where.fail(f"name {_name(node.id)} is not allowed; allowed variables: "
                   f"{', '.join(EXPRESSION_VARIABLES)}", node)
    if isinstance(node, ast.UnaryOp):
        if isinstance(node.op, ast.UAdd):
            return _lower(node.operand, where)
        if isinstance(node.op, ast.USub):
            return _unary(OP_NEG, _lower(node.operand, where), node, where)
        where.fail(f"operator {_OPERATOR_TEXT.get(type(node.op).__name__, '?')} is not allowed", node)
    if isinstance(node, ast.BinOp):
        op = _BINARY_OP.get(type(node.op))
        if op is None:
            where.fail(f"operator {_OPERATOR_TEXT.get(type(node.op).__name__, '?')} is not allowed", node)
        left = _lower(node.left, where)
        right = _lower(node.right, where)
        if op == OP_DIV and right.is_const and right.value == 0.0:
            where.fail("division by a literal zero", node.right)
        return _binary(op, left, right, node, where)
    if isinstance(node, ast.Call):
        return _call(node, where)
    where.fail(_describe(node), node)
    raise AssertionError("unreachable")  # pragma: no cover - fail() always raises


def _unary(op, part, node, where):
    if part.is_const:
        return _folded(_PY_UNARY[op](part.value), node, where)
    return _Part(items=part.items + [(op, 0)], need=part.need)


def _binary(op, left, right, node, where):
    if left.is_const and right.is_const:
        return _folded(_PY_BINARY[op](left.value, right.value), node, where)
    need = max(left.need, 1 + right.need)
    return _Part(items=left.code() + right.code() + [(op, 0)], need=need)


def _call(node, where):
    func = node.func
    if isinstance(func, ast.Attribute):
        where.fail("attribute access is not allowed", func)
    if not isinstance(func, ast.Name):
        where.fail(_NODE_TEXT.get(type(func).__name__, "only the functions "
                   f"{', '.join(EXPRESSION_FUNCTIONS)} may be called"), func)
    name = func.id
    if name not in EXPRESSION_FUNCTIONS:
        if name in _VARIABLE_INDEX:
            where.fail(f"{name!r} is a variable, not a function", func)
        where.fail(f"function {_name(name)} is not allowed; allowed functions: "
                   f"{', '.join(EXPRESSION_FUNCTIONS)}", func)
    if node.keywords:
        where.fail(f"keyword arguments are not allowed (in {name}())", node.keywords[0].value)
    for arg in node.args:
        if isinstance(arg, ast.Starred):
            where.fail(f"starred arguments are not allowed (in {name}())", arg)
    low, high = EXPRESSION_FUNCTIONS[name]
    count = len(node.args)
    if high is not None and count != low:
        where.fail(f"{name}() takes exactly {low} argument, got {count}", node)
    if count < low:
        where.fail(f"{name}() needs at least {low} arguments, got {count}", node)
    op = _FUNCTION_OP[name]
    parts = [_lower(arg, where) for arg in node.args]
    if high is not None:
        return _unary(op, parts[0], node, where)
    result = parts[0]
    for part in parts[1:]:
        result = _binary(op, result, part, node, where)
    return result


def _assemble(part, where):
    """Turn a :class:`_Part` into the ``(code, consts)`` arrays of the program format."""
    if part.need > MAX_STACK:
        where.fail(f"expression too deep (needs {part.need} evaluation stack slots, "
                   f"at most {MAX_STACK})")
    index = {}
    consts = []
    code = []
    for op, arg in part.code():
        if op == OP_CONST:
            key = float(arg).hex()
            if key not in index:
                index[key] = len(consts)
                consts.append(float(arg))
            arg = index[key]
        code.extend((op, arg))
    return np.array(code, dtype=np.int64), np.array(consts, dtype=np.float64)


def compile_expression(text, file=None, entry=None, line=None):
    """Check a rate formula and compile it to a stack-machine program.

    Parameters
    ----------
    text : str
        The formula, in the grammar of the module docstring (a plain int or float is
        accepted as a constant formula).
    file, entry, line : optional
        File, entry (reaction) and 1-based line the formula came from, for messages.

    Returns
    -------
    code : numpy.ndarray of int64
        Instruction words, two per instruction, as described in the module docstring.
    consts : numpy.ndarray of float64
        Literal values used by the program (constant parts already folded).

    Raises
    ------
    InputError
        One line naming file, line, entry, column and what is not allowed.

    References
    ----------
    Postfix evaluation order: Bauer and Samelson (1960), Commun. ACM 3(2), 76-83.
    """
    tree, where = _parse(text, file, entry, line)
    return _assemble(_lower(tree.body, where), where)


# --------------------------------------------------------------------------- kernels


@njit(cache=True, error_model="numpy")
def eval_expression_at(code, consts, start, length, cstart, variables):
    """Evaluate one program of a concatenation of programs.

    Parameters
    ----------
    code : int64 array
        Instruction words (see the module docstring); the program is
        ``code[start:start + length]``.
    consts : float64 array
        Constants; the program's constant ``i`` is ``consts[cstart + i]``.
    start, length, cstart : int
        Offset of the first code word, number of code words, offset of the first constant.
    variables : float64 array
        Values of ``Tg`` (K), ``Te`` (K), ``E_N_Td`` (Td), ``mean_energy_eV`` (eV), in the
        order of ``EXPRESSION_VARIABLES``.

    Returns
    -------
    float
        The value of the formula, in the units the formula gives (IEEE-754 results, may
        be nan or inf; never raises for those).

    References
    ----------
    Bauer and Samelson (1960), Commun. ACM 3(2), 76-83 (postfix evaluation on a stack).
    """
    stack = np.empty(MAX_STACK, dtype=np.float64)
    sp = 0
    pc = start
    end = start + length
    while pc < end:
        op = code[pc]
        arg = code[pc + 1]
        pc += 2
        if op == OP_CONST or op == OP_VAR:
            if sp >= MAX_STACK:
                raise ValueError("expression program overflows the evaluation stack")
            if op == OP_CONST:
                stack[sp] = consts[cstart + arg]
            else:
                stack[sp] = variables[arg]
            sp += 1
        elif op >= OP_NEG and op <= OP_SQRT:
            if sp < 1:
                raise ValueError("expression program pops an empty stack")
            x = stack[sp - 1]
            if op == OP_NEG:
                x = -x
            elif op == OP_EXP:
                x = math.exp(x)
            elif op == OP_LOG:
                x = math.log(x)
            else:
                x = math.sqrt(x)
            stack[sp - 1] = x
        elif op >= OP_ADD and op <= OP_MAX:
            if sp < 2:
                raise ValueError("expression program pops an empty stack")
            b = stack[sp - 1]
            a = stack[sp - 2]
            sp -= 1
            if op == OP_ADD:
                a = a + b
            elif op == OP_SUB:
                a = a - b
            elif op == OP_MUL:
                a = a * b
            elif op == OP_DIV:
                a = a / b
            elif op == OP_POW:
                a = a ** b
            elif op == OP_MIN:
                if a != a or b != b:
                    a = np.nan
                elif not a < b:
                    a = b
            else:
                if a != a or b != b:
                    a = np.nan
                elif not a > b:
                    a = b
            stack[sp - 1] = a
        else:
            raise ValueError("unknown opcode in expression program")
    if sp != 1:
        raise ValueError("expression program does not leave exactly one value")
    return stack[0]


@njit(cache=True, error_model="numpy")
def eval_expression(code, consts, variables):
    """Evaluate a single program ``(code, consts)`` at ``variables``.

    Same as ``eval_expression_at(code, consts, 0, len(code), 0, variables)``; see there for
    units and IEEE-754 behaviour.

    References
    ----------
    Bauer and Samelson (1960), Commun. ACM 3(2), 76-83 (postfix evaluation on a stack).
    """
    return eval_expression_at(code, consts, 0, code.shape[0], 0, variables)


# --------------------------------------------------------------------------- helpers


def check_program(code, consts, start=0, length=None, cstart=0):
    """Check that a program is well formed; raise ``ValueError`` if not.

    Checks opcodes, variable and constant indices, even length and stack use (never
    empty when popping, at most :data:`MAX_STACK`, exactly one value at the end). Meant
    for arrays built by hand or concatenated; :func:`compile_expression` output passes.

    References
    ----------
    Bauer and Samelson (1960), Commun. ACM 3(2), 76-83 (postfix evaluation on a stack).
    """
    code = np.asarray(code)
    consts = np.asarray(consts)
    if code.ndim != 1 or code.dtype != np.int64 or consts.ndim != 1 or consts.dtype != np.float64:
        raise ValueError("code must be a 1-D int64 array and consts a 1-D float64 array")
    length = code.shape[0] - start if length is None else length
    if length <= 0 or length % 2 or start < 0 or start + length > code.shape[0]:
        raise ValueError("program length must be a positive even number of words inside code")
    sp = 0
    for pc in range(start, start + length, 2):
        op, arg = int(code[pc]), int(code[pc + 1])
        if op == OP_CONST:
            if not 0 <= cstart + arg < consts.shape[0] or arg < 0:
                raise ValueError(f"constant index {arg} out of range at word {pc}")
            sp += 1
        elif op == OP_VAR:
            if not 0 <= arg < len(EXPRESSION_VARIABLES):
                raise ValueError(f"variable index {arg} out of range at word {pc}")
            sp += 1
        elif OP_NEG <= op <= OP_SQRT:
            if sp < 1:
                raise ValueError(f"stack empty at word {pc}")
        elif OP_ADD <= op <= OP_MAX:
            if sp < 2:
                raise ValueError(f"stack has fewer than two values at word {pc}")
            sp -= 1
        else:
            raise ValueError(f"unknown opcode {op} at word {pc}")
        if sp > MAX_STACK:
            raise ValueError(f"program needs more than {MAX_STACK} stack slots")
    if sp != 1:
        raise ValueError("program does not leave exactly one value")


def concatenate_programs(programs):
    """Concatenate compiled programs for :func:`eval_expression_at`.

    Parameters
    ----------
    programs : iterable of (code, consts)
        Results of :func:`compile_expression`.

    Returns
    -------
    code : int64 array, consts : float64 array
        All programs one after the other.
    start, length, cstart : int64 arrays
        Per program: offset of its first code word, its number of code words, offset of
        its first constant.
    """
    programs = list(programs)
    for code, consts in programs:
        check_program(code, consts)
    lengths = np.array([len(c) for c, _ in programs], dtype=np.int64)
    clengths = np.array([len(k) for _, k in programs], dtype=np.int64)
    start = np.cumsum(lengths) - lengths
    cstart = np.cumsum(clengths) - clengths
    code = np.concatenate([np.zeros(0, np.int64)] + [c for c, _ in programs])
    consts = np.concatenate([np.zeros(0, np.float64)] + [k for _, k in programs])
    return code, consts, start, lengths, cstart


def variables_used(code, start=0, length=None):
    """Names of the variables a program reads, in the order of EXPRESSION_VARIABLES."""
    length = len(code) - start if length is None else length
    used = {int(code[pc + 1]) for pc in range(start, start + length, 2) if code[pc] == OP_VAR}
    return tuple(name for i, name in enumerate(EXPRESSION_VARIABLES) if i in used)


def evaluate_reference(text, variables):
    """Evaluate a formula in plain Python, without compiling (reference for tests).

    The formula is first checked by :func:`compile_expression` (same whitelist and
    errors); the syntax tree is then walked node by node with the IEEE-754 operations of
    the kernel, without constant folding.

    Parameters
    ----------
    text : str
        The formula.
    variables : mapping or sequence of float
        Values by name, or in the order of :data:`EXPRESSION_VARIABLES`; units as there.

    Returns
    -------
    float

    References
    ----------
    IEEE Std 754-2008 (special values); C99 Annex F (exp, log, pow).
    """
    compile_expression(text)
    if isinstance(variables, dict):
        values = {name: float(variables[name]) for name in EXPRESSION_VARIABLES if name in variables}
    else:
        values = dict(zip(EXPRESSION_VARIABLES, (float(v) for v in variables)))
    tree, _ = _parse(text)
    return _reference(tree.body, values)


def _reference(node, values):
    if isinstance(node, ast.Constant) and isinstance(node.value, (int, float)) \
            and not isinstance(node.value, bool):
        return float(node.value)
    if isinstance(node, ast.Name) and node.id in _VARIABLE_INDEX:
        return values[node.id]
    if isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.UAdd):
        return _reference(node.operand, values)
    if isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.USub):
        return -_reference(node.operand, values)
    if isinstance(node, ast.BinOp) and type(node.op) in _BINARY_OP:
        op = _BINARY_OP[type(node.op)]
        return _PY_BINARY[op](_reference(node.left, values), _reference(node.right, values))
    if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) \
            and node.func.id in EXPRESSION_FUNCTIONS and not node.keywords:
        op = _FUNCTION_OP[node.func.id]
        args = [_reference(arg, values) for arg in node.args]
        if op in _PY_UNARY:
            return _PY_UNARY[op](args[0])
        result = args[0]
        for arg in args[1:]:
            result = _PY_BINARY[op](result, arg)
        return result
    raise ValueError(f"node {type(node).__name__} outside the whitelist")  # checked before
