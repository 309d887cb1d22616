"""Reading users' files and writing results safely."""
