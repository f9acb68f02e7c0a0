"""The material pages: materials and their minimum metal temperatures (the admins extend the table)."""
