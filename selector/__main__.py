from selector.cli.app import main

main()
