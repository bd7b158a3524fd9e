import sys

from esdsurge.cli import main

sys.exit(main())
