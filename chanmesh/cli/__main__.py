import sys

from chanmesh.cli import main

sys.exit(main())
