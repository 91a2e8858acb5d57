module github.com/joulelaw/joulelaw

go 1.26
