"""Exceptions raised at the boundary of the library.

Every error a user can cause is a :class:`SelectorError`, a subclass of ``ValueError`` whose
message names the problem; the command line prints it as one line and exits non-zero.
"""
from __future__ import annotations


def plural(n: int, word: str, many: str | None = None) -> str:
    """``"1 liquid"``, ``"3 liquids"``: a count with its noun in the right number (``many``: an
    irregular plural).

    >>> plural(1, "problem"), plural(2, "problem"), plural(2, "was", "were")
    ('1 problem', '2 problems', '2 were')
    """
    return f"{n} {word if n == 1 else (many or word + 's')}"


class SelectorError(ValueError):
    """Bad input: the message says what is wrong and, where possible, what would be right."""


class UnknownLiquidError(SelectorError, KeyError):
    """A name, synonym, CAS number or SMILES that matches no liquid; carries suggestions."""

    def __init__(self, query: str, suggestions: list[str] | None = None, is_cas: bool = False):
        self.query = query
        self.suggestions = list(suggestions or [])
        msg = f"unknown liquid {query!r}"
        if self.suggestions:
            msg += "; did you mean " + ", ".join(repr(s) for s in self.suggestions) + "?"
        elif is_cas:
            msg += ("; no library liquid has this CAS number (the library holds liquids with published "
                    "HSP): check the number, try the name, or add it to your own liquids")
        else:
            msg += ("; no library name is close to it: try its CAS number or SMILES, or add it to your "
                    "own liquids")
        super().__init__(msg)

    def __str__(self) -> str:  # KeyError would add quotes around the message
        return self.args[0]


class GenericNameError(UnknownLiquidError):
    """The name of an isomer mixture or of a grade of variable make-up ("xylene", "white spirit"):
    no single library liquid; ``suggestions`` are the library liquids it is made of."""

    def __init__(self, query: str, members: list[str], note: str, missing=()):
        self.query = query
        self.suggestions = list(members)
        self.missing = list(missing)
        msg = f"{query!r} is not one liquid: {note}"
        if self.suggestions:
            msg += "; pick the one you mean (" + ", ".join(repr(m) for m in self.suggestions) + ")"
            if self.missing:
                gone = (", ".join(self.missing[:-1]) + " and " + self.missing[-1]) if len(self.missing) > 1 else self.missing[0]
                msg += f" - {gone} {'is' if len(self.missing) == 1 else 'are'} not in the library -"
            msg += " or add your grade, with its data-sheet values, to your own liquids"
        else:
            msg += "; it is not in the library: add your grade, with its data-sheet values, to your own liquids"
        SelectorError.__init__(self, msg)


class PolymerNameError(UnknownLiquidError):
    """The name of a polymer ("polystyrene"): no liquid, and not its monomer either."""

    def __init__(self, query: str):
        self.query = query
        self.suggestions = []
        SelectorError.__init__(self, (
            f"{query!r} names a polymer, not a liquid (the library does not read it as its monomer): "
            "a polymer is a target to dissolve - give its sphere as numbers, dD,dP,dH,R0 in MPa^0.5 from "
            "a data sheet or the literature, or fit it from your own lab tests (likewise sphere)"))


class NotLiquidError(UnknownLiquidError):
    """A compound of the published HSP tables that is not in the liquid library (solid at 25 C,
    or without liquid property data): ``entry`` holds its published values (``name, cas, smiles,
    delta_d, delta_p, delta_h, hsp_source``) so that it can still be a target."""

    def __init__(self, query: str, entry: dict, why: str):
        self.query = query
        self.suggestions = []
        self.entry = dict(entry)
        self.why = why
        e = self.entry
        hsp = f"{e['delta_d']:g},{e['delta_p']:g},{e['delta_h']:g}"
        msg = (f"{e['name']!r} ({e['cas']}) has published HSP (dD {e['delta_d']:g}, dP {e['delta_p']:g}, "
               f"dH {e['delta_h']:g} MPa^0.5; {e['hsp_source']}) but is not in the liquid library: {why}. "
               f"As a target to dissolve, give its name where a target is asked or the numbers "
               f"(likewise rank {hsp}); to use it as a liquid (warm, or in a mixture), add it to your own "
               f"liquids (likewise guess '{e['smiles']}' --save-mine my_liquids.csv)")
        SelectorError.__init__(self, msg)


class InputTableError(SelectorError):
    """A user table (CSV or DataFrame) with one or more problems, all reported at once."""

    def __init__(self, what: str, problems: list[str]):
        self.problems = list(problems)
        lines = "\n".join(f"  - {p}" for p in self.problems)
        super().__init__(f"{what}: {plural(len(self.problems), 'problem')}\n{lines}")


class PriceListError(InputTableError):
    """Every problem of a price list at once; a single problem reads as one line. ``label`` names
    the list in the message ("the price list prices.csv"); without it one problem stands alone
    and several go under "cost list"."""

    def __init__(self, problems: list[str], label: str | None = None):
        self.label = label
        if len(problems) == 1:
            self.problems = list(problems)
            SelectorError.__init__(self, problems[0] if label is None else f"{label}: {problems[0]}")
        else:
            super().__init__(label or "cost list", problems)
