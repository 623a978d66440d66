from stackopt.cli.main import entry

entry()
