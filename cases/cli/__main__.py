import sys

from whorl.cases.cli import main

sys.exit(main())
