from caseload.cli import main

main()
