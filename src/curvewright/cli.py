"""The ``curvewright`` command: a thin layer over the core and io packages."""

from __future__ import annotations

import argparse
import sys

from . import CAUTION, __version__


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="curvewright",
        description="Calibration curves for testing laboratories. " + CAUTION,
    )
    parser.add_argument("--version", action="version", version=f"curvewright {__version__}")
    return parser


def main(argv: list[str] | None = None) -> int:
    build_parser().parse_args(argv)
    print(CAUTION)
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
