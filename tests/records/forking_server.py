"""Imports the app once, then forks a fresh uvicorn server for each port read on standard input and
prints its process id, so a crash test can kill servers many times without paying for imports again."""
import os
import sys

import uvicorn

from server.app import create_app


def reap() -> None:
    """Collect servers that were killed, so none lingers as a zombie."""
    while True:
        try:
            pid, _ = os.waitpid(-1, os.WNOHANG)
        except ChildProcessError:
            return
        if pid == 0:
            return


def main() -> None:
    for line in sys.stdin:
        reap()
        port = int(line)
        pid = os.fork()
        if pid == 0:
            uvicorn.run(create_app(), host="127.0.0.1", port=port, log_level="warning")
            os._exit(0)
        print(pid, flush=True)
    reap()


if __name__ == "__main__":
    main()
