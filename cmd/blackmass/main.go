// Command blackmass estimates what a lot of scrap lithium-ion cells holds, what its leach will
// consume and what the leach liquor will be, and writes an intake workbook for the lot.
package main

import "os"

func main() { os.Exit(Main(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) }
