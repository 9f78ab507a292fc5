"""The drawer file: part values, the parsed inventory, atomic saving and the change journal."""
