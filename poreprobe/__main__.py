"""``python -m poreprobe``."""

from poreprobe.cli.main import main

raise SystemExit(main())
