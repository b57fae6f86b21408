from partsel.cli import main

main()
