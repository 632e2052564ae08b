from checker.cli import main

raise SystemExit(main())
