import sys

from pitfalls.cli import main

sys.exit(main())
