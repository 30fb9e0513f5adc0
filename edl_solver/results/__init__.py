"""What a solve returns: the schema of its values (units, long names, pair keys, status) and the Result."""
