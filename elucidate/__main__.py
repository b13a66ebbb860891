"""``python -m elucidate``."""

from .cli import main

raise SystemExit(main())
