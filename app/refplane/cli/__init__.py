"""Refplane's command line: ``refplane COMMAND ...``, or ``refplane [FILE ...]`` for the window.

The command line uses the analysis layer only; it never imports Qt except for ``render``
(which draws offscreen) and for opening the window. Bad input prints one line on stderr
(file, line, reason) and exits with status 2.
"""

from __future__ import annotations

import argparse
import importlib
import os
import re
import sys

from refplane import __version__

#: Sub-commands, each a module ``refplane.cli.<name>`` with ``add_parser(sub)`` and ``run(args)``.
COMMANDS = ("read", "plane", "correct", "fit", "render", "cable", "tdr", "resonance", "feedline", "match",
            "check", "report")


class _Parser(argparse.ArgumentParser):
    """An argument parser whose errors are one plain line and status 2."""

    def error(self, message: str) -> None:  # noqa: D401 - argparse's hook
        self.exit(2, f"{self.prog}: {message} (see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    """The full parser with every available sub-command."""
    parser = _Parser(
        prog="refplane",
        description="Smith chart impedance analysis for saved network-analyzer sweeps. "
                    "Run 'refplane' alone (or 'refplane FILE ...') to open the window.",
    )
    parser.add_argument("--version", action="version", version=f"refplane {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMANDS:
        try:
            module = importlib.import_module(f"refplane.cli.{name}")
        except ModuleNotFoundError as exc:  # a command still being written is simply not offered
            if exc.name != f"refplane.cli.{name}":
                raise
            continue
        module.add_parser(sub)
    return parser


#: Names the window opens without asking (sweeps and saved sessions), even when not yet on disk.
_WINDOW_FILE = re.compile(r".*\.(s\d+p|snp|ts|csv|refplane)$", re.IGNORECASE)
_NUMBER = re.compile(r"^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$")
#: A unit written as a word of its own: "470 MHz", "31 ps", "20 cm", "0.4 dB@1GHz", "50 ohm".
_UNIT_WORD = re.compile(
    r"^(?:[fpnuµμmkKMGT]?(?:[Hh][Zz]|s|m|F|H|Ω|[Oo]hms?)|[kKMGT]|cm|in|inch(?:es)?|ft|feet|foot"
    r"|dB(?:@\S+)?)$")


def join_split_values(argv: list[str]) -> list[str]:
    """Join an option's number and a unit typed after a space: ``--at 470 MHz`` → ``--at '470 MHz'``.

    Without this the shell hands argparse "MHz" as a separate word, which then reads as a file
    name or an unknown argument. Only a unit word right after an option's number is joined.
    """
    out: list[str] = []
    i = 0
    while i < len(argv):
        word = argv[i]
        nxt = argv[i + 1] if i + 1 < len(argv) else None
        is_value = bool(out) and out[-1].startswith("-") and not _NUMBER.match(out[-1]) and _NUMBER.match(word)
        inline = word.startswith("--") and "=" in word and _NUMBER.match(word.partition("=")[2])
        if nxt is not None and (is_value or inline) and _UNIT_WORD.match(nxt):
            out.append(f"{word} {nxt}")
            i += 2
            continue
        out.append(word)
        i += 1
    return out


def _not_a_command(word: str) -> str | None:
    """Why ``word`` (the first argument) is neither a command nor something to open, or None."""
    import difflib

    if os.path.exists(word) or _WINDOW_FILE.match(word) or os.sep in word or "/" in word:
        return None
    close = difflib.get_close_matches(word.lower(), COMMANDS, n=1, cutoff=0.6)
    if close:
        return f"refplane: unknown command '{word}'; did you mean '{close[0]}'? (see 'refplane --help')"
    return (f"refplane: '{word}' is neither a command nor a file (commands: {', '.join(COMMANDS)}; "
            "a sweep opens in the window: refplane FILE.s1p)")


def _open_window(files: list[str]) -> int:
    from refplane.views.launch import run_window

    return run_window(files)


def _install_signal_handlers():
    """Turn SIGTERM into an exception, as SIGINT already is, so that writes in progress
    remove their temporary file (the target keeps its old content). Returns the handler
    it replaced (or None)."""
    import signal

    def stop(signum, frame):
        raise KeyboardInterrupt

    try:
        return signal.signal(signal.SIGTERM, stop)
    except (ValueError, OSError, AttributeError):  # not the main thread, or no SIGTERM
        return None


def _show_warnings(command: str):
    """Print warnings (a file read with a caution) as one plain line each; returns the
    previous ``warnings.showwarning``."""
    import warnings

    def show(message, category, filename, lineno, file=None, line=None):
        print(f"refplane {command}: warning: {message}", file=sys.stderr)

    before = warnings.showwarning
    warnings.showwarning = show
    return before


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the process exit status."""
    from refplane.analysis.errors import AnalysisError

    argv = sys.argv[1:] if argv is None else list(argv)
    if not argv or (argv[0] not in COMMANDS and not argv[0].startswith("-")):
        problem = _not_a_command(argv[0]) if argv else None
        if problem:
            print(problem, file=sys.stderr)
            return 2
        return _open_window(argv)
    argv = join_split_values(argv)
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help()
        return 0
    import signal
    import warnings

    old_handler = _install_signal_handlers()
    old_show = _show_warnings(args.command)
    try:
        return int(args.run(args) or 0)
    except AnalysisError as exc:
        print(f"refplane {args.command}: {exc}", file=sys.stderr)
        return 2
    except OSError as exc:
        from refplane.analysis.errors import printable, shorten
        from refplane.analysis.files.fileio import path_problem

        name = getattr(exc, "filename", None)
        where = f"{shorten(printable(str(name)), 80, keep_end=True)}: " if name else ""
        print(f"refplane {args.command}: {where}{path_problem(exc)}", file=sys.stderr)
        return 2
    except MemoryError:
        print(f"refplane {args.command}: out of memory", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130
    finally:
        warnings.showwarning = old_show
        if old_handler is not None:
            try:
                signal.signal(signal.SIGTERM, old_handler)
            except (ValueError, OSError):
                pass
