"""``python -m neve.cli``: the ``neve`` command without its console script."""

from neve.cli import main

main()
