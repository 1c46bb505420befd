import os
import signal
import sys


class _StoppedWhileLoading(BaseException):
    pass


def _stop(signum, frame):
    raise _StoppedWhileLoading(signum)


signal.signal(signal.SIGTERM, _stop)  # until the command line takes SIGTERM over in main()
try:
    from pitfalls.cli import exit_code, main
except (KeyboardInterrupt, _StoppedWhileLoading) as stopped:  # a signal while the command line loads
    how = "terminated (SIGTERM)" if isinstance(stopped, _StoppedWhileLoading) else "interrupted (SIGINT)"
    print(f"pitfalls: {how}; stopped, no partly written file left", file=sys.stderr, flush=True)
    os._exit(143 if isinstance(stopped, _StoppedWhileLoading) else 130)

sys.exit(exit_code(main()))
