import sys

from thist.cli import main

sys.exit(main())
