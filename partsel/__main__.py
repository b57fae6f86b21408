"""``python -m partsel``: the command line, Ctrl-C handling first (see :mod:`partsel.launch`)."""

from partsel.launch import main

main()
