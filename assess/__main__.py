from assess.cli import main

main()
