"""What every benchmark does first: print the machine's load, and refuse to report figures from a busy one.

A figure taken while other work shares the cores says more about that work than about Flarebook, and a
ratio of two such figures can hide a gap (the bare endpoint slows down too). So each benchmark calls
`check(args)` before it measures: it prints the load average and the core count, and stops when the
1-minute load average is above 1.0 on 2 cores (0.5 per core). `--busy-ok` lets it run anyway for a smoke
test; then every line it prints afterwards is marked as taken on a busy machine, so such a figure cannot
be copied into the README unmarked.
"""
import argparse
import os
import sys
from dataclasses import dataclass
from typing import TextIO

LOAD_PER_CORE_LIMIT = 0.5  # 1.0 on the 2 cores these machines have
BUSY_MARK = "[taken on a busy machine] "


@dataclass(frozen=True)
class Machine:
    load: tuple[float, float, float]
    cores: int

    @property
    def busy(self) -> bool:
        return self.load[0] > LOAD_PER_CORE_LIMIT * self.cores

    def describe(self) -> str:
        one, five, fifteen = self.load
        return (f"load average {one:.2f} {five:.2f} {fifteen:.2f} on {self.cores} cores "
                f"({'busy' if self.busy else 'idle enough'}: the limit is {LOAD_PER_CORE_LIMIT * self.cores:.1f})")


def this_machine() -> Machine:
    return Machine(load=os.getloadavg(), cores=os.cpu_count() or 1)


def add_busy_ok(parser: argparse.ArgumentParser) -> argparse.ArgumentParser:
    parser.add_argument("--busy-ok", action="store_true",
                        help="run on a busy machine anyway (a smoke test): every figure is marked as busy")
    return parser


class MarkedLines:
    """A text stream that puts the busy mark at the start of every line written to it."""

    def __init__(self, stream: TextIO, mark: str = BUSY_MARK):
        self.stream, self.mark, self.at_line_start = stream, mark, True

    def write(self, text: str) -> int:
        out = []
        for piece in text.splitlines(keepends=True):
            if self.at_line_start and piece.strip():
                out.append(self.mark)
            out.append(piece)
            self.at_line_start = piece.endswith("\n")
        self.stream.write("".join(out))
        return len(text)

    def flush(self) -> None:
        self.stream.flush()

    def __getattr__(self, name):
        return getattr(self.stream, name)


def check(busy_ok: bool, machine: Machine | None = None) -> Machine:
    """Print the load; stop on a busy machine unless busy_ok, and then mark every line printed after."""
    machine = machine or this_machine()
    print(machine.describe(), flush=True)
    if machine.busy:
        if not busy_ok:
            raise SystemExit("The machine is busy: no figures. Run on an idle machine "
                             "(or pass --busy-ok for a smoke test whose figures are marked as busy).")
        if not isinstance(sys.stdout, MarkedLines):
            sys.stdout = MarkedLines(sys.stdout)
    return machine
