"""Command line: ``likewise <command> ...`` (also ``python -m selector``).

Each subcommand lives in a ``selector/cli_*.py`` module listed in :data:`COMMAND_MODULES`;
modules that are not installed are skipped. Errors caused by input print one line and exit 2.
"""
from __future__ import annotations

import argparse
import importlib
import sys

COMMAND_MODULES = ["cli_core", "cli_sphere", "cli_mix", "cli_blend", "cli_estimate", "cli_app"]

DESCRIPTION = """\
Choose solvents and solvent blends with Hansen solubility parameters (HSP, MPa^0.5).
Rank ~800 real liquids against a resin's sphere, fit a sphere from your lab tests,
check that liquids mix, design blends and safer substitutes, estimate HSP from SMILES.

Every suggestion is a starting point for laboratory tests. Solvents can be flammable,
toxic or reactive: the supplier's safety data sheet and local regulation come first."""


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="likewise", description=DESCRIPTION,
                                formatter_class=argparse.RawDescriptionHelpFormatter)
    from . import __version__

    p.add_argument("--version", action="version", version=f"likewise {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    for m in COMMAND_MODULES:
        try:
            mod = importlib.import_module(f".{m}", __package__)
        except ModuleNotFoundError as e:
            if e.name and e.name.endswith(m):
                continue
            raise
        mod.register(sub)
    return p


#: Library keyword -> the command-line option that sets it, for messages that name the keyword.
FLAG_OF = {"min_flash_point_c": "--min-flash", "max_molar_volume": "--max-volume",
           "polarity_weight": "--polarity-weight", "min_fraction": "--min-share", "max_uses": "--max-uses",
           "bootstrap": "--bootstrap", "threshold": "--pass-mark", "must_stay_until": "--keep-until",
           "relative_humidity": "--humidity", "seed": "--seed"}


def with_flags(msg: str) -> str:
    """``msg`` with each library keyword it names followed by the option a command-line user typed:
    "min_flash_point_c must not be NaN" -> "--min-flash (min_flash_point_c) must not be NaN".

    >>> with_flags("max_uses must be a positive whole number, got 0")
    '--max-uses (max_uses) must be a positive whole number, got 0'
    """
    import re

    for key, flag in FLAG_OF.items():
        if flag not in msg:
            msg = msg.replace(f"({key})", f"({flag}, {key})", 1)
        if flag not in msg:   # only where the keyword is the subject of a complaint
            msg = re.sub(rf"(?<![\w(-]){key}(?= must| and \w+ must| =)", f"{flag} ({key})", msg, count=1)
    return msg


def _options_with_a_value(parser: argparse.ArgumentParser) -> set:
    """Every option string, in ``parser`` and its subcommands, that takes exactly one value."""
    found = set()
    for act in parser._actions:
        if isinstance(act, argparse._SubParsersAction):
            for sub in act.choices.values():
                found |= _options_with_a_value(sub)
        elif act.option_strings and act.nargs is None:
            found.update(act.option_strings)
    return found


def join_negative_values(argv: list, options: set) -> list:
    """``argv`` with ``--opt -20:10`` written ``--opt=-20:10`` for each option that takes a value,
    so that a window or list with a negative start is read as the value, not as an unknown option.
    argparse reads a lone negative number (``--at -5``) without help, but not ``-20:10``.

    >>> join_negative_values(["rank", "x", "--flash", "-20:10", "--at", "5"], {"--flash", "--at"})
    ['rank', 'x', '--flash=-20:10', '--at', '5']
    """
    import re

    out, i = [], 0
    while i < len(argv):
        tok = argv[i]
        if tok == "--":
            return out + list(argv[i:])
        if tok in options and i + 1 < len(argv) and re.match(r"-\.?\d", argv[i + 1]):
            out.append(f"{tok}={argv[i + 1]}")
            i += 2
            continue
        out.append(tok)
        i += 1
    return out


def main(argv=None) -> int:
    parser = build_parser()
    argv = list(sys.argv[1:] if argv is None else argv)
    a = parser.parse_args(join_negative_values(argv, _options_with_a_value(parser)))
    if not getattr(a, "func", None):
        parser.print_help()
        return 0
    from .errors import SelectorError

    try:
        return int(a.func(a) or 0)
    except (SelectorError, ValueError, FileNotFoundError, PermissionError, IsADirectoryError) as e:
        from .errors import UnknownLiquidError

        if isinstance(e, UnknownLiquidError):
            from .cli_core import unknown_liquid_hint

            e = unknown_liquid_hint(e.query, e, target=False)   # a SMILES: how to estimate it
        msg = with_flags(str(e).strip() or type(e).__name__)
        print(f"likewise {a.command}: error: {msg}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0


if __name__ == "__main__":
    sys.exit(main())
