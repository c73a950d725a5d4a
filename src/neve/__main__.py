"""``python -m neve``: the ``neve`` command without its console script."""

from neve.cli import main

main()
