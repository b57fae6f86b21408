"""``python -m partsel``: Ctrl-C handling first, then the command line."""

from partsel import interrupt

interrupt.install()

from partsel.cli import main  # noqa: E402  (after the handler, so Ctrl-C is never a traceback)

main()
