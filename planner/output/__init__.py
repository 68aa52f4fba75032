"""What the program writes: CSV/JSON tables, the calendar, figures and the report folder."""
