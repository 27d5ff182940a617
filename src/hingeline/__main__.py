"""`python -m hingeline`: same as the `hingeline` command."""
import sys

from hingeline._cli.main import main

sys.exit(main())
