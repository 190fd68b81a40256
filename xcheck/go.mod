module hoplore/xcheck

go 1.26.0

require hoplore v0.0.0

require github.com/apache/arrow-go/v18 v18.8.0 // indirect

replace hoplore => ../
