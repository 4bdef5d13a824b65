"""The ``curvewright`` program (also ``python -m curvewright``).

``curvewright --version`` answers here, from the version string alone, and ``curvewright [COMMAND]
--help`` from the help texts kept in :mod:`curvewright.cli_help`, without loading the command line,
argparse, the engine or the app. Everything else goes to :func:`curvewright.cli.main`.
"""

from __future__ import annotations

import sys

TYPE_CHECKING = False
if TYPE_CHECKING:
    from collections.abc import Sequence


def main(argv: Sequence[str] | None = None) -> int:
    args = list(sys.argv[1:] if argv is None else argv)
    if args == ["--version"]:
        from ._version import __version__

        print(f"curvewright {__version__}")  # the same line as argparse's --version in cli.build_parser
        return 0
    if args and args[-1] in ("-h", "--help"):
        from .cli_help import help_text

        text = help_text(args)
        if text is not None:
            sys.stdout.write(text)  # as argparse's print_help; it then exits with 0
            return 0
    from .cli import end_command, main as run_command

    code = run_command(args)
    return end_command(args, code) if argv is None else code  # started as the program: ended at once


if __name__ == "__main__":
    sys.exit(main())
