#!/usr/bin/env python3
"""Command-line entry: `python build.py check|build ...`. See `python build.py --help`."""
import sys

from registry.cli import main

if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
