"""The case register's pages: case list, case form, case and result pages, audit history, sites and units;
the case inputs as forms and the API give them, a stored result in the case's units, and its drawings."""
