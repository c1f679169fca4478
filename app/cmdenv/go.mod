module cmdenv.whirlfit.invalid

go 1.26
