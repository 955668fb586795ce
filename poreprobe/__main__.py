"""``python -m poreprobe``."""

from poreprobe.cli import main

raise SystemExit(main())
