# allocsim figure style: embedded into every figure script at build time.
# Colours: the Okabe-Ito palette (distinguishable with colour-blindness).
set style line 1 lc rgb '#0072B2' lw 2 pt 7 ps 1.1
set style line 2 lc rgb '#D55E00' lw 2 pt 5 ps 1.0
set style line 3 lc rgb '#009E73' lw 2 pt 9 ps 1.2
set style line 4 lc rgb '#CC79A7' lw 2 pt 11 ps 1.2
set style line 5 lc rgb '#E69F00' lw 2 pt 13 ps 1.2
set style line 6 lc rgb '#56B4E9' lw 2 pt 15 ps 1.2
set style line 7 lc rgb '#000000' lw 2 pt 3 ps 1.0
set style line 8 lc rgb '#999999' lw 1.5 pt 1 ps 1.0
# reference lines (identity, nominal level, null mean) and null bands
set style line 20 lc rgb '#333333' lw 1.5 dt 2
set style line 21 lc rgb '#BBBBBB'
set style increment user
set border 3 lw 1.2 lc rgb '#333333'
set tics nomirror out scale 0.7
set grid back lw 0.8 lc rgb '#E5E5E5'
set key top left opaque box lc rgb '#CCCCCC' samplen 2.5 spacing 1.2
set mxtics
set mytics
set format x '%g'
set format y '%g'
set bars 1.5
# heatmaps: light (few units) to dark (many), white where nothing is drawn
set palette defined (0 '#FFF7BC', 0.25 '#FEC44F', 0.5 '#EC7014', 0.75 '#993404', 1 '#3B1103')
set palette maxcolors 0
