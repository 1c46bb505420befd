import sys

try:
    from pitfalls.cli import main
except KeyboardInterrupt:  # Ctrl-C while the command line itself loads
    print("pitfalls: interrupted (SIGINT); stopped, no partly written file left", file=sys.stderr)
    sys.exit(130)

sys.exit(main())
