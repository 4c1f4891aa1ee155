"""Reading the tolerance notations written on drawings and inspection sheets.

:func:`parse_tolerance` turns one text such as ``±0.05``, ``+0.02/-0.01``, ``12.00–12.05``,
``12.05 max``, ``≥ 11.98``, ``Ø25 H7`` or ``ISO 2768-m`` into a :class:`Tolerance` in the row's
unit. The grammar is small and explicit (docs/tolerances.md lists every form); anything else is a
:class:`~qc.errors.ToleranceError` saying what was found and which forms are accepted.

Reading rules (common practice, no source):
- a sign must touch its number (``-0.01``); a hyphen right after a number, or between spaces,
  separates two limits (``12.00-12.05``, ``12.00 - 12.05``);
- two deviations may come in either order; every non-zero deviation carries its sign;
- a unit written after a number applies to that number; a unit at the end of the text applies to
  every tolerance number without one (a leading nominal keeps the row's unit).
"""

from __future__ import annotations

import math
import re
import unicodedata
from dataclasses import dataclass, replace

from qc.errors import ToleranceError
from qc.tolerances import iso286, iso2768
from qc.tolerances.model import Tolerance, fmt_number, unit_name, unit_to_mm

__all__ = ["ACCEPTED", "from_general_class", "parse_tolerance"]

ACCEPTED = (
    "accepted: ±0.05, +0.02/-0.01, 0/-0.05, 12.00-12.05, 12.05 max, MIN 11.98, ≤ 12.05, "
    "12 ±0.05, Ø25 H7, 25h6, H7/g6, ISO 2768-m (see docs/tolerances.md)"
)
_MAX_LEN = 200

_UNITS = {"mm": "mm", "µm": "µm", "μm": "µm", "um": "µm", "in": "in", "in.": "in",
          "inch": "in", "inches": "in", '"': "in"}
_WORDS = {"max": "MAX", "max.": "MAX", "maximum": "MAX", "min": "MIN", "min.": "MIN",
          "minimum": "MIN", "dia": "DIA", "dia.": "DIA"}
_ISO2768 = re.compile(r"(?:iso\s*)?2768(?:\s*-\s*1)?\s*[-:]?\s*(?P<cls>[fmcv])(?P<geo>[hkl])?",
                      re.IGNORECASE)
_NUMBER = re.compile(r"[0-9]+(?:[.,][0-9]*)?|[.,][0-9]+")
_CODE = re.compile(r"[A-Za-z]{1,2}(?:01|[0-9]{1,2})(?![0-9.,])")
_WORD = re.compile(r"[A-Za-zµμ]+\.?|\"")
_DASHES = "\u2013\u2014"  # en and em dash: always a range between two limits
_MINUSES = "\u2212\u2010\u2011\ufe63\uff0d"  # minus sign and hyphen look-alikes


@dataclass(frozen=True)
class _Tok:
    kind: str  # NUM PM SLASH RANGE LE GE MAX MIN DIA UNIT CODE
    text: str
    value: float = math.nan
    signed: bool = False
    unit: str | None = None


def _fail(text: str, reason: str) -> ToleranceError:
    shown = text if len(text) <= 60 else text[:57] + "..."
    return ToleranceError(f"cannot read tolerance {shown!r}: {reason}; {ACCEPTED}")


def _scan(s: str, original: str, decimal: str) -> list[_Tok]:
    toks: list[_Tok] = []
    i, n = 0, len(s)
    while i < n:
        ch = s[i]
        if ch.isspace():
            i += 1
            continue
        space_before = i > 0 and s[i - 1].isspace()
        rest = s[i:]
        prev = toks[-1].kind if toks else None
        if rest.startswith(("±", "+/-", "+-")):
            step = 1 if ch == "±" else 3 if rest.startswith("+/-") else 2
            toks.append(_Tok("PM", s[i:i + step]))
            i += step
            continue
        for sym, kind in (("<=", "LE"), ("=<", "LE"), ("≤", "LE"), (">=", "GE"), ("=>", "GE"),
                          ("≥", "GE"), ("...", "RANGE"), ("/", "SLASH")):
            if rest.startswith(sym):
                toks.append(_Tok(kind, sym))
                i += len(sym)
                break
        else:
            if ch in _DASHES:
                toks.append(_Tok("RANGE", ch))
                i += 1
                continue
            if ch in "+-":
                after = _NUMBER.match(s, i + 1)
                # a hyphen glued to the number before it separates two limits
                if ch == "-" and (after is None or (prev == "NUM" and not space_before)):
                    toks.append(_Tok("RANGE", "-"))
                    i += 1
                    continue
                if after is None:
                    raise _fail(original, f"'{ch}' must be followed by a number")
                toks.append(_number(after.group(), original, decimal, sign=ch))
                i = after.end()
                continue
            m = _NUMBER.match(s, i)
            if m:
                code = _CODE.match(s, m.end())
                toks.append(_number(m.group(), original, decimal))
                i = m.end()
                if code:  # "25h6": a fit code glued to its nominal ("25mm" has no grade digits)
                    toks.append(_Tok("CODE", code.group()))
                    i = code.end()
                continue
            if ch in "Øø⌀∅":
                toks.append(_Tok("DIA", ch))
                i += 1
                continue
            code = _CODE.match(s, i)
            if code:
                toks.append(_Tok("CODE", code.group()))
                i = code.end()
                continue
            word = _WORD.match(s, i)
            if word:
                w = word.group()
                low = w.lower()
                if low in _UNITS:
                    toks.append(_Tok("UNIT", w, unit=_UNITS[low]))
                elif low in _WORDS:
                    toks.append(_Tok(_WORDS[low], w))
                else:
                    raise _fail(original, f"unexpected word {w!r}")
                i = word.end()
                continue
            raise _fail(original, f"unexpected character {ch!r}")
    return toks


def _number(digits: str, original: str, decimal: str, sign: str = "") -> _Tok:
    if "," in digits:
        if decimal != ",":
            raise _fail(original, "a comma inside a number; if the sheet writes decimal commas, "
                                  "set the decimal convention to comma")
        digits = digits.replace(",", ".")
    value = float(digits)
    if not math.isfinite(value):
        raise _fail(original, "a number is too large")
    return _Tok("NUM", sign + digits, -value if sign == "-" else value, signed=bool(sign))


def _attach_units(toks: list[_Tok], original: str) -> tuple[list[_Tok], str | None]:
    """Fold UNIT tokens into the number before them; return the trailing unit, if any."""
    out: list[_Tok] = []
    trailing = None
    for k, t in enumerate(toks):
        if t.kind != "UNIT":
            out.append(t)
            continue
        if not out or out[-1].kind != "NUM" or out[-1].unit is not None:
            raise _fail(original, f"the unit {t.text!r} must follow a number")
        out[-1] = replace(out[-1], unit=t.unit)
        if k == len(toks) - 1 or (k == len(toks) - 2 and toks[-1].kind in ("MAX", "MIN")):
            trailing = t.unit
    return out, trailing


@dataclass(frozen=True)
class _Ctx:
    original: str
    factor: float  # mm per row unit
    unit: str  # label of the row unit
    trailing: str | None

    def value(self, t: _Tok) -> float:
        """A tolerance number converted to the row unit."""
        unit = t.unit or self.trailing
        return t.value if unit is None else t.value * unit_to_mm(unit) / self.factor


def parse_tolerance(
    text: str,
    *,
    nominal: float | None = None,
    feature: str | None = None,
    unit: str | float = "mm",
    decimal: str = ".",
) -> Tolerance:
    """Read one tolerance notation into limits in the row's unit (``unit``: name or mm per unit).

    ``nominal`` is the row's nominal size (row unit), used by relative notations and fit codes;
    ``feature`` ("hole"/"shaft") picks the side of a fit such as ``H7/g6``; ``decimal`` is "." or
    ",". Raises ToleranceError for anything it cannot read.
    """
    if not isinstance(text, str):
        raise ToleranceError(f"a tolerance must be text, got {text!r}; {ACCEPTED}")
    if decimal not in (".", ","):
        raise ToleranceError(f"the decimal convention must be '.' or ',', got {decimal!r}")
    factor = unit_to_mm(unit)
    if nominal is not None:
        try:
            nominal = float(nominal)
        except (TypeError, ValueError):
            raise ToleranceError(f"the nominal must be a number, got {nominal!r}") from None
        if math.isnan(nominal):
            nominal = None
        elif not math.isfinite(nominal):
            raise ToleranceError(f"the nominal must be a finite number, got {nominal!r}")
    s = unicodedata.normalize("NFKC", text)
    for ch in _MINUSES:
        s = s.replace(ch, "-")
    s = s.strip()
    if not s:
        raise _fail(text, "the text is empty")
    if len(s) > _MAX_LEN:
        raise _fail(text, f"longer than {_MAX_LEN} characters")
    m = _ISO2768.fullmatch(s)
    if m:
        if nominal is None:
            raise _fail(text, "a general tolerance class needs the row's nominal size")
        return from_general_class(nominal, m["cls"], unit=unit)
    if re.match(r"(?:iso\s*)?2768", s, re.IGNORECASE):
        raise _fail(text, "unknown ISO 2768-1 class; write ISO 2768-f, -m, -c or -v")
    toks, trailing = _attach_units(_scan(s, text, decimal), text)
    ctx = _Ctx(text, factor, unit_name(unit), trailing)
    return _interpret(toks, ctx, nominal, feature)


def _interpret(
    toks: list[_Tok], ctx: _Ctx, nominal: float | None, feature: str | None
) -> Tolerance:
    kinds = [t.kind for t in toks]
    dia = False
    if kinds and kinds[0] == "DIA":
        if len(kinds) < 2 or kinds[1] != "NUM":
            raise _fail(ctx.original, "Ø must be followed by the nominal size")
        dia, toks, kinds = True, toks[1:], kinds[1:]
    if "DIA" in kinds:
        raise _fail(ctx.original, "Ø belongs in front of the nominal size")

    # a leading unsigned number followed by a tolerance part is the nominal size
    text_nominal = None
    if len(toks) >= 2 and kinds[0] == "NUM" and not toks[0].signed and toks[0].value != 0 and (
        kinds[1] in ("PM", "CODE") or (kinds[1] == "NUM" and toks[1].signed)
        or (len(toks) >= 3 and kinds[1] == "NUM" and kinds[2] in ("NUM", "SLASH"))
    ):
        head = toks[0]
        text_nominal = head.value
        if head.unit is not None:
            text_nominal = head.value * unit_to_mm(head.unit) / ctx.factor
        same = nominal is None or math.isclose(text_nominal, nominal, rel_tol=1e-9, abs_tol=1e-12)
        if not same:
            raise ToleranceError(
                f"the tolerance {ctx.original!r} names the nominal {fmt_number(text_nominal)}, "
                f"but the row's nominal is {fmt_number(nominal)}; correct one of them"
            )
        nominal = text_nominal
        toks, kinds = toks[1:], kinds[1:]
    elif dia:
        raise _fail(ctx.original, "Ø must be followed by the nominal size and a tolerance")
    prefix = ("Ø" if dia else "") + (fmt_number(nominal) + " " if nominal is not None else "")

    if kinds and kinds[0] == "CODE":
        return _iso_code(toks, kinds, ctx, nominal, feature, prefix)
    if kinds == ["PM", "NUM"]:
        t = toks[1]
        if t.signed:
            raise _fail(ctx.original, "write ± and the value without another sign")
        half = ctx.value(t)
        return _relative(nominal, -half, half, "symmetric", None,
                         f"{prefix}±{fmt_number(half)} {ctx.unit}")
    if kinds in (["NUM", "NUM"], ["NUM", "SLASH", "NUM"]):
        a, b = toks[0], toks[-1]
        if not a.signed and not b.signed:
            if kinds == ["NUM", "SLASH", "NUM"] and text_nominal is None:
                return _limits(ctx.value(a), ctx.value(b), nominal, ctx)
            raise _fail(ctx.original, "two numbers without signs; write deviations with their "
                                      "signs (+0.02/-0.01) or limits with a dash (12.00-12.05)")
        for t in (a, b):
            if not t.signed and t.value != 0:
                raise _fail(ctx.original, f"the deviation {t.text} has no sign; write +{t.text} "
                                          f"or -{t.text}")
        lo, hi = sorted((ctx.value(a), ctx.value(b)))
        return _relative(nominal, lo, hi, "deviations", None,
                         f"{prefix}{fmt_number(hi, True)}/{fmt_number(lo, True)} {ctx.unit}")
    if text_nominal is not None:
        raise _fail(ctx.original, "after the nominal size comes ±, two deviations or a fit code")
    if kinds == ["NUM", "RANGE", "NUM"]:
        a, sep, b = toks
        if sep.text == "-" and (a.signed or b.signed):
            raise _fail(ctx.original, "signs around a hyphen are ambiguous; write deviations "
                                      "with a slash (+0.1/-0.05) or limits with '–' or '...'")
        return _limits(ctx.value(a), ctx.value(b), nominal, ctx)
    if kinds in (["NUM", "MAX"], ["MAX", "NUM"], ["LE", "NUM"]):
        return _one_sided(ctx.value(toks[0] if kinds[0] == "NUM" else toks[1]), "max", nominal, ctx)
    if kinds in (["NUM", "MIN"], ["MIN", "NUM"], ["GE", "NUM"]):
        return _one_sided(ctx.value(toks[0] if kinds[0] == "NUM" else toks[1]), "min", nominal, ctx)
    if kinds in (["MAX"], ["MIN"]):
        if nominal is None:
            raise _fail(ctx.original, f"a lone '{toks[0].text}' needs the row's nominal size")
        return _one_sided(nominal, "max" if kinds == ["MAX"] else "min", nominal, ctx)
    if kinds == ["NUM"] and toks[0].signed:
        raise _fail(ctx.original, "only one deviation; write both, e.g. +0.02/0")
    if kinds == ["NUM"]:
        raise _fail(ctx.original, "a number alone is not a tolerance")
    if kinds == ["PM"]:
        raise _fail(ctx.original, "± must be followed by the value")
    raise _fail(ctx.original, "this arrangement is not a known notation")


def _relative(nominal: float | None, lo: float, hi: float, kind: str, code: str | None,
              description: str) -> Tolerance:
    if nominal is None:
        return Tolerance(None, math.nan, math.nan, lo, hi, kind, code, description)
    return Tolerance(nominal, nominal + lo, nominal + hi, lo, hi, kind, code, description)


def _limits(a: float, b: float, nominal: float | None, ctx: _Ctx) -> Tolerance:
    lo, hi = min(a, b), max(a, b)
    dev = (None, None) if nominal is None else (lo - nominal, hi - nominal)
    return Tolerance(nominal, lo, hi, dev[0], dev[1], "limits", None,
                     f"{fmt_number(lo)}–{fmt_number(hi)} {ctx.unit}")


def _one_sided(value: float, kind: str, nominal: float | None, ctx: _Ctx) -> Tolerance:
    dev = None if nominal is None else value - nominal
    sign = "≤" if kind == "max" else "≥"
    desc = f"{sign} {fmt_number(value)} {ctx.unit}"
    if kind == "max":
        return Tolerance(nominal, math.nan, value, None if dev is None else math.nan, dev,
                         "max", None, desc)
    return Tolerance(nominal, value, math.nan, dev, None if dev is None else math.nan,
                     "min", None, desc)


def _iso_code(toks: list[_Tok], kinds: list[str], ctx: _Ctx, nominal: float | None,
              feature: str | None, prefix: str) -> Tolerance:
    side = (feature or "").strip().lower()
    if kinds == ["CODE"]:
        code = toks[0].text
        is_hole = iso286.split_code(code)[2]
        if side in ("hole", "shaft") and is_hole != (side == "hole"):
            kind = "hole (capital letter)" if is_hole else "shaft (small letter)"
            raise ToleranceError(
                f"{code} is a {kind} tolerance class, but the row is marked as a {side}"
            )
    elif kinds == ["CODE", "SLASH", "CODE"]:
        hole, shaft = toks[0].text, toks[2].text
        for c, want in ((hole, True), (shaft, False)):
            if iso286.split_code(c)[2] is not want:
                raise _fail(ctx.original, "a fit is written hole/shaft, e.g. H7/g6 "
                                          "(capital letter first)")
        if side not in ("hole", "shaft"):
            raise ToleranceError(
                f"{ctx.original!r} is a fit of a hole and a shaft; say whether this row is the "
                "'hole' or the 'shaft'"
            )
        code = hole if side == "hole" else shaft
    else:
        raise _fail(ctx.original, "after a fit code nothing else may follow")
    if nominal is None:
        raise _fail(ctx.original, f"{code} needs the nominal size (in the text or the row)")
    lo_mm, hi_mm = iso286.fit_limits(nominal * ctx.factor, code)
    lo, hi = lo_mm / ctx.factor, hi_mm / ctx.factor
    full = toks[0].text + ("/" + toks[2].text if len(toks) == 3 else "")
    span = f"±{fmt_number(hi)}" if lo == -hi and hi > 0 else (
        f"{fmt_number(hi, True)}/{fmt_number(lo, True)}")
    which = f"{code}, " if len(toks) == 3 else ""
    desc = f"{prefix}{full}: {span} {ctx.unit} ({which}ISO 286-1)"
    return _relative(nominal, lo, hi, "iso286", code, desc)


def from_general_class(
    nominal: float,
    tolerance_class: str,
    *,
    unit: str | float = "mm",
    angle: bool = False,
    shorter_leg: float | None = None,
) -> Tolerance:
    """The ISO 2768-1 general tolerance of a row with no tolerance of its own, as a Tolerance.

    ``nominal`` and ``shorter_leg`` are in the row unit, except for an angle, whose nominal and
    result are in degrees. Reference: ISO 2768-1:1989, Tables 1 and 3.
    """
    cls = str(tolerance_class).strip().lower()
    if cls not in iso2768.CLASSES:
        raise ToleranceError(f"unknown ISO 2768-1 class {tolerance_class!r}; use f, m, c or v")
    factor = unit_to_mm(unit)
    if angle:
        leg = None if shorter_leg is None else shorter_leg * factor
        half = iso2768.general_tolerance(nominal, cls, angle=True, shorter_leg_mm=leg)
        u = "°"
    else:
        half = iso2768.general_tolerance(nominal * factor, cls) / factor
        u = " " + unit_name(unit)
    desc = f"{fmt_number(nominal)} ISO 2768-{cls}: ±{fmt_number(half)}{u} (ISO 2768-1)"
    return Tolerance(nominal, nominal - half, nominal + half, -half, half, "iso2768", cls, desc)
