"""Factor tables as typed data: average, screening-range, population and leaker factors, correlation
equations, component classes, constants and GWP values, each with its citation and status.

Each factor set declares the industry segments it serves (factor-sets.csv; a user file names them in
a ``segments`` column), and the leaker order is kept per segment (leaker-order.csv): an estimate
never takes another segment's table without saying so.

``build_book`` takes the rows of the data files (plain dicts, read by fieldapp.catalog) and returns a
``FactorBook`` or the problems found, each naming the file, line and column.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field

from fieldapp.core.enums import ComponentType, IndustrySegment, Service, SiteKind
from fieldapp.core.fields import FieldProblem

STATUSES = ("text", "memory", "summary", "company", "computed")
KINDS = {"average": ("equipment_class", "service"), "screening_range": ("equipment_class", "service", "screening"),
         "population": ("component", "service", "region"),
         "leaker": ("component", "service", "method", "equipment_group")}
BASES = {"kg TOC/h": "toc_mass", "kg CH4/h": "methane_mass", "scf whole gas/h": "whole_gas_volume"}
EPA_SERVICE = {Service.GAS: "gas", Service.LIGHT_LIQUID: "light_oil", Service.HEAVY_LIQUID: "heavy_oil",
               Service.WATER_OIL: "water_oil"}
W_SERVICE = {Service.GAS: "gas", Service.LIGHT_LIQUID: "light_crude", Service.HEAVY_LIQUID: "heavy_crude"}
KIND_WORDS = {"average": "average factor", "screening_range": "screening-range factor",
              "population": "population factor", "leaker": "leaker factor"}
KEY_WORDS = {"ogi": "OGI survey", "method21": "Method 21 survey", "compressor": "compressor components",
             "non_compressor": "non-compressor components", "storage_station": "storage station components",
             "storage_wellhead": "storage wellhead components", ">=10000": "screening at or above 10,000 ppmv",
             "<10000": "screening below 10,000 ppmv"}


@dataclass(frozen=True, slots=True)
class Factor:
    """One emission factor row."""

    factor_set: str
    kind: str
    key: tuple[str, ...]
    value: float
    unit: str
    basis: str
    citation: str
    status: str
    verified: bool
    note: str = ""

    def describe(self) -> str:
        """Short text naming the row, e.g. 'w-3a leaker valve/gas/ogi = 14.84 scf whole gas/h/...'."""
        return f"{self.factor_set} {self.kind} {'/'.join(k for k in self.key if k)} = {self.value:g} {self.unit}"

    def in_words(self, table: str) -> str:
        """The row for a reader, e.g. '40 CFR 98 subpart W Table W-3A leaker factor: valve, gas service, OGI
        survey, compressor components = 14.84 scf whole gas/h/leaking component' (``table`` names the table)."""
        names = list(KINDS[self.kind])
        parts = []
        for name, k in zip(names, self.key, strict=False):
            if not k:
                continue
            word = KEY_WORDS.get(k, k.replace("_", " "))
            parts.append(f"{word} service" if name == "service" else f"{word} region" if name == "region" else word)
        return f"{table} {KIND_WORDS[self.kind]}: {', '.join(parts)} = {self.value:g} {self.unit}"


@dataclass(frozen=True, slots=True)
class Correlation:
    """A screening-value correlation equation, rate = a · SV^b (kg TOC/h, SV in ppmv)."""

    equipment_class: str
    a: float
    b: float
    default_zero: float
    pegged_10000: float
    pegged_100000: float
    citation: str
    status: str
    verified: bool

    def rate(self, ppm: float) -> float:
        """The equation's rate at a screening value."""
        return self.a * ppm**self.b


@dataclass(frozen=True, slots=True)
class Cited:
    """A constant or GWP value with its citation."""

    value: float
    unit: str
    citation: str
    status: str
    label: str = ""


@dataclass(frozen=True, slots=True)
class Segment:
    """An industry segment of 40 CFR 98.230(a), and the site kinds it is the default for."""

    id: IndustrySegment
    paragraph: str
    label: str
    site_kinds: tuple[SiteKind, ...]
    citation: str
    status: str

    def describe(self) -> str:
        """'onshore petroleum and natural gas production (40 CFR 98.230(a)(2))'."""
        return f"{self.label} (40 CFR {self.paragraph})" if self.paragraph else self.label


@dataclass(frozen=True, slots=True)
class FactorSet:
    """What one factor table declares about itself: the segments it serves, its name and citation."""

    name: str
    segments: tuple[IndustrySegment, ...]
    label: str
    citation: str
    status: str
    note: str = ""


@dataclass(frozen=True, slots=True)
class OrderEntry:
    """One place in a segment's leaker order, with why that table is used there."""

    factor_set: str
    reason: str


@dataclass(frozen=True)
class FactorBook:
    """Every factor the estimates use."""

    factors: Mapping[tuple, Factor]
    correlations: Mapping[str, Correlation]
    classes: Mapping[ComponentType, tuple[str, tuple[str, ...]]]
    leaker_order: Mapping[IndustrySegment, tuple[OrderEntry, ...]]
    constants: Mapping[str, Cited]
    gwp: Mapping[tuple[str, int], Cited]
    sets: Mapping[str, str] = field(default_factory=dict)
    set_info: Mapping[str, FactorSet] = field(default_factory=dict)
    segments: Mapping[IndustrySegment, Segment] = field(default_factory=dict)

    def find(self, kind: str, *key: str, factor_set: str | None = None) -> Factor | None:
        """The factor of a kind and key, from one set or the first set that has it."""
        if factor_set is not None:
            return self.factors.get((factor_set, kind, *key))
        for (_fs, k, *rest), factor in self.factors.items():
            if k == kind and tuple(rest) == key:
                return factor
        return None

    def table_name(self, factor_set: str) -> str:
        """The short published name of a factor set's table ('EPA-453/R-95-017 Table 2-8'): its label up to the
        first comma, or the set's own name when it declares no label."""
        info = self.set_info.get(factor_set)
        return info.label.split(",")[0] if info and info.label else factor_set

    def serves(self, factor_set: str, segment: IndustrySegment) -> bool:
        """True when a factor set declares that it serves a segment."""
        info = self.set_info.get(factor_set)
        return info is not None and segment in info.segments

    def default_segment(self, kind: SiteKind) -> IndustrySegment | None:
        """The segment a site kind defaults to, when the kind is unambiguous (else None)."""
        for seg in self.segments.values():
            if kind in seg.site_kinds:
                return seg.id
        return None

    def gwp_sets(self) -> list[str]:
        """Names of the GWP sets."""
        return sorted({s for s, _h in self.gwp})

    def constant(self, name: str) -> float:
        """A named constant's value."""
        return self.constants[name].value


class _Rows:
    def __init__(self) -> None:
        self.problems: list[FieldProblem] = []

    def num(self, row: Mapping, col: str, where: str, line: int, positive: bool = True) -> float | None:
        try:
            value = float(row[col])
        except (KeyError, TypeError, ValueError):
            self.problems.append(FieldProblem(f"{where}: {col}", f"{row.get(col)!r} is not a number", line))
            return None
        if not math.isfinite(value) or (positive and value < 0):
            self.problems.append(FieldProblem(f"{where}: {col}", "must be a finite number, 0 or more", line))
            return None
        return value

    def cited(self, row: Mapping, where: str, line: int) -> tuple[str, str, bool]:
        citation, status = (row.get("citation") or "").strip(), (row.get("status") or "").strip()
        if not citation:
            self.problems.append(FieldProblem(f"{where}: citation", "is required", line))
        if status not in STATUSES:
            self.problems.append(FieldProblem(f"{where}: status", f"{status!r} is not allowed; allowed: "
                                              f"{', '.join(STATUSES)}", line))
        verified = (row.get("verified") or "no").strip().lower() in ("yes", "true", "1")
        return citation, status, verified


def _basis(unit: str) -> str | None:
    for prefix, basis in BASES.items():
        if unit.startswith(prefix):
            return basis
    return None


def build_book(files: Mapping[str, Iterable[Mapping[str, str]]]) -> tuple[FactorBook | None, list[FieldProblem]]:
    """Build the factor book from rows of each file, keyed by file name; problems name file, line, column."""
    r = _Rows()
    factors: dict[tuple, Factor] = {}
    correlations: dict[str, Correlation] = {}
    classes: dict[ComponentType, tuple[str, tuple[str, ...]]] = {}
    order: list[tuple[str, int, str, str, int]] = []
    set_info: dict[str, FactorSet] = {}
    user_segments: dict[str, set[IndustrySegment]] = {}
    segments: dict[IndustrySegment, Segment] = {}
    constants: dict[str, Cited] = {}
    gwp: dict[tuple[str, int], Cited] = {}
    sets: dict[str, str] = {}
    for name, rows in files.items():
        for line, row in enumerate(rows, start=2):
            if name == "component-classes.csv":
                try:
                    classes[ComponentType(row["component_type"])] = (
                        row["epa_class"], tuple(c.strip() for c in row["subpart_w_component"].split(";") if c.strip()))
                except (KeyError, ValueError):
                    r.problems.append(FieldProblem(f"{name}: component_type", "unknown component type", line))
            elif name == "leaker-order.csv":
                r.cited(row, name, line)
                order.append((row.get("segment", ""), int(r.num(row, "rank", name, line) or 0),
                              (row.get("factor_set") or "").strip(), (row.get("note") or "").strip(), line))
            elif name == "segments.csv":
                _segment_row(r, name, line, row, segments)
            elif name == "factor-sets.csv":
                citation, status, _v = r.cited(row, name, line)
                segs = _segment_list(r, name, line, row.get("segments"))
                set_info[row["factor_set"]] = FactorSet(row["factor_set"], tuple(segs), row.get("label", ""),
                                                        citation, status, (row.get("note") or "").strip())
            elif name == "constants.csv":
                value = r.num(row, "value", name, line)
                citation, status, _v = r.cited(row, name, line)
                if value is not None:
                    constants[row["name"]] = Cited(value, row.get("unit", ""), citation, status)
            elif name == "gwp.csv":
                value = r.num(row, "value", name, line)
                citation, status, _v = r.cited(row, name, line)
                if value is not None:
                    gwp[(row["set"], int(row["horizon_years"]))] = Cited(value, "", citation, status, row["label"])
            elif "a" in row and "b" in row:
                nums = [r.num(row, c, name, line) for c in ("a", "b", "default_zero_kg_h", "pegged_10000_kg_h",
                                                             "pegged_100000_kg_h")]
                citation, status, verified = r.cited(row, name, line)
                if None not in nums:
                    correlations[row["equipment_class"]] = Correlation(row["equipment_class"], *nums, citation,
                                                                       status, verified)
            else:
                _factor_row(r, name, line, row, factors, sets)
                if name.startswith("user:"):
                    user_segments.setdefault(row.get("factor_set", ""), set()).update(
                        _segment_list(r, name, line, row.get("segments")))
    for fs, segs in user_segments.items():
        set_info[fs] = FactorSet(fs, tuple(sorted(segs)), f"user factor set {fs}", "user factor file", "company")
    for fs in sets:
        if fs not in set_info:
            r.problems.append(FieldProblem("factor-sets.csv: factor_set", f"{fs!r} has factor rows but declares no "
                                           "segments", 0))
    leaker_order = _leaker_order(r, order, set_info, [s for s, origin in sets.items() if origin == "user"])
    if r.problems:
        return None, r.problems
    return FactorBook(factors, correlations, classes, leaker_order, constants, gwp, sets, set_info, segments), []


def _segment_list(r: _Rows, name: str, line: int, text: str | None) -> list[IndustrySegment]:
    out = []
    for part in (text or "").split(";"):
        part = part.strip()
        if not part:
            continue
        try:
            out.append(IndustrySegment(part))
        except ValueError:
            r.problems.append(FieldProblem(f"{name}: segments", f"{part!r} is not allowed; allowed (separated by "
                                           f"';'): {', '.join(IndustrySegment)}", line))
    return out


def _segment_row(r: _Rows, name: str, line: int, row: Mapping[str, str], out: dict) -> None:
    citation, status, _v = r.cited(row, name, line)
    try:
        seg = IndustrySegment(row["segment"])
        kinds = tuple(SiteKind(k.strip()) for k in (row.get("site_kinds") or "").split(";") if k.strip())
    except (KeyError, ValueError) as exc:
        r.problems.append(FieldProblem(f"{name}: segment", str(exc), line))
        return
    out[seg] = Segment(seg, (row.get("paragraph") or "").strip(), row.get("label", ""), kinds, citation, status)


def _leaker_order(r: _Rows, order: list, set_info: Mapping[str, FactorSet], user_sets: list[str]) -> dict:
    """Per segment: user sets that serve it first, then the shipped order; an entry must serve its segment."""
    out: dict[IndustrySegment, list[OrderEntry]] = {}
    for seg in IndustrySegment:
        out[seg] = [OrderEntry(s, f"user factor set {s} declares this segment") for s in user_sets
                    if seg in set_info[s].segments]
    for seg_text, _rank, fs, note, line in sorted(order, key=lambda o: (o[0], o[1])):
        try:
            seg = IndustrySegment(seg_text)
        except ValueError:
            r.problems.append(FieldProblem("leaker-order.csv: segment", f"{seg_text!r} is not allowed; allowed: "
                                           f"{', '.join(IndustrySegment)}", line))
            continue
        if fs not in set_info or seg not in set_info[fs].segments:
            r.problems.append(FieldProblem("leaker-order.csv: factor_set", f"{fs!r} does not declare segment "
                                           f"{seg.value} in factor-sets.csv", line))
            continue
        out[seg].append(OrderEntry(fs, note))
    return {seg: tuple(entries) for seg, entries in out.items()}


def _factor_row(r: _Rows, name: str, line: int, row: Mapping[str, str], factors: dict, sets: dict) -> None:
    kind = (row.get("kind") or "").strip()
    if kind not in KINDS:
        r.problems.append(FieldProblem(f"{name}: kind", f"{kind!r} is not allowed; allowed: {', '.join(KINDS)}",
                                       line))
        return
    value = r.num(row, "value", name, line)
    unit = (row.get("unit") or "").strip()
    basis = _basis(unit)
    if basis is None:
        r.problems.append(FieldProblem(f"{name}: unit", f"{unit!r} is not allowed; units start with one of: "
                                       f"{', '.join(BASES)}", line))
    citation, status, verified = r.cited(row, name, line)
    factor_set = (row.get("factor_set") or "").strip()
    if not factor_set:
        r.problems.append(FieldProblem(f"{name}: factor_set", "is required", line))
    if name.startswith("user:") and not (row.get("segments") or "").strip():
        r.problems.append(FieldProblem(f"{name}: segments", "is required: the industry segments this set serves, "
                                       f"separated by ';'; allowed: {', '.join(IndustrySegment)}", line))
    key = tuple((row.get(col) or "").strip() for col in KINDS[kind])
    if value is None or basis is None or not factor_set:
        return
    sets.setdefault(factor_set, "user" if name.startswith("user:") else "shipped")
    factors[(factor_set, kind, *key)] = Factor(factor_set, kind, key, value, unit, basis, citation, status,
                                               verified, (row.get("note") or "").strip())
