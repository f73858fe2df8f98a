"""Loads shipped and user data files: program files (TOML) and factor tables (CSV).

This module owns the file reading for rule data, so the core stays pure. User files live in the
folder named by ``PLUMEBOOK_PROGRAMS`` (default: ``programs`` in the user data folder); a user
file with the same id as a shipped one is refused, so a copy must get its own id.
"""

from __future__ import annotations

import csv
import functools
import os
import tomllib
from datetime import date
from pathlib import Path

from fieldapp.core.dates import HolidayTest, no_holidays
from fieldapp.core.factors import FactorBook, build_book
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.core.program import Program, parse_program
from fieldapp.core.records import Survey, field_names

DATA_DIR = Path(__file__).parent / "data"
SHIPPED_PROGRAMS = DATA_DIR / "programs"
SHIPPED_FACTORS = DATA_DIR / "factors"


def user_programs_dir() -> Path:
    """Folder of the user's own program files."""
    if os.environ.get("PLUMEBOOK_PROGRAMS"):
        return Path(os.environ["PLUMEBOOK_PROGRAMS"])
    from platformdirs import user_data_dir

    return Path(user_data_dir("plumebook", appauthor=False)) / "programs"


def read_program_file(path: Path) -> Program:
    """Parse one program file; ValidationError naming the file and key if it is invalid."""
    return parse_program_text(path.name, path.read_text(encoding="utf-8"))


def parse_program_text(name: str, text: str) -> Program:
    """Parse the text of a program file called ``name``; ValidationError naming the file and key."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ValidationError([FieldProblem(name, f"not valid TOML: {exc}")]) from None
    program, problems = parse_program(data)
    if program is not None:
        allowed = set(field_names(Survey))
        problems = [FieldProblem("survey_records.required", f"{key!r} is not a survey field; allowed: "
                                 f"{', '.join(sorted(allowed))}")
                    for key in program.required_survey_fields if key not in allowed]
    if problems:
        raise ValidationError([FieldProblem(f"{name}: {p.field}", p.message) for p in problems])
    assert program is not None
    return program


def _signature(folder: Path) -> tuple:
    """Names, sizes and change times of a folder's program files, so edits are seen without a restart."""
    if not folder.is_dir():
        return ()
    return tuple((p.name, p.stat().st_mtime_ns, p.stat().st_size) for p in sorted(folder.glob("*.toml")))


@functools.lru_cache(maxsize=8)
def _programs(user_dir: str, _signature: tuple) -> dict[str, tuple[Program, str]]:
    found: dict[str, tuple[Program, str]] = {}
    for origin, folder in (("shipped", SHIPPED_PROGRAMS), ("user", Path(user_dir))):
        if not folder.is_dir():
            continue
        for path in sorted(folder.glob("*.toml")):
            program = read_program_file(path)
            if program.id in found:
                raise ValidationError([FieldProblem(f"{path.name}: id",
                                                    f"{program.id!r} is already used by another program")])
            found[program.id] = (program, origin)
    return found


def programs() -> dict[str, tuple[Program, str]]:
    """Every program by id, with where it came from ('shipped' or 'user')."""
    folder = user_programs_dir()
    return _programs(str(folder), _signature(folder))


def program(program_id: str) -> Program:
    """One program by id; ValidationError listing the known ids if there is none."""
    known = programs()
    if program_id not in known:
        raise ValidationError([FieldProblem("program", f"{program_id!r} is not a known program; known: "
                                            f"{', '.join(sorted(known))}")])
    return known[program_id][0]


@functools.cache
def holiday_test(country: str | None, subdivision: str | None) -> HolidayTest:
    """A holiday test for a country (and subdivision) from the ``holidays`` package."""
    if not country:
        return no_holidays
    import holidays

    calendar = holidays.country_holidays(country, subdiv=subdivision)

    def is_holiday(day: date) -> bool:
        return day in calendar

    return is_holiday


def holidays_for(prog: Program) -> HolidayTest:
    """The business-day holiday test of a program."""
    return holiday_test(prog.holiday_country, prog.holiday_subdivision)


def user_factors_dir() -> Path:
    """Folder of the user's own factor set files (CSV, same columns as subpart-w-leaker.csv)."""
    if os.environ.get("PLUMEBOOK_FACTORS"):
        return Path(os.environ["PLUMEBOOK_FACTORS"])
    from platformdirs import user_data_dir

    return Path(user_data_dir("plumebook", appauthor=False)) / "factors"


def _read_csv(path: Path) -> list[dict[str, str]]:
    with open(path, newline="", encoding="utf-8-sig") as fh:
        return list(csv.DictReader(fh))


@functools.lru_cache(maxsize=4)
def _book(user_dir: str, _sig: tuple) -> FactorBook:
    files = {p.name: _read_csv(p) for p in sorted(SHIPPED_FACTORS.glob("*.csv"))}
    files["gwp.csv"] = _read_csv(DATA_DIR / "gwp.csv")
    folder = Path(user_dir)
    if folder.is_dir():
        files.update({f"user:{p.name}": _read_csv(p) for p in sorted(folder.glob("*.csv"))})
    book, problems = build_book(files)
    if problems:
        raise ValidationError(problems)
    assert book is not None
    return book


def factor_book() -> FactorBook:
    """Every shipped and user factor, GWP value and constant."""
    folder = user_factors_dir()
    sig = tuple((p.name, p.stat().st_mtime_ns) for p in sorted(folder.glob("*.csv"))) if folder.is_dir() else ()
    return _book(str(folder), sig)
