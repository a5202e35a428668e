# write_pkgconfig OUTDIR ABI: the relocatable OUTDIR/lib/pkgconfig/thrustmap.pc
# of the installed layout, shared by build.sh and build-windows.sh.
write_pkgconfig() {
  mkdir -p "$1/lib/pkgconfig"
  cat > "$1/lib/pkgconfig/thrustmap.pc" <<PC
prefix=\${pcfiledir}/../..
includedir=\${prefix}/include
libdir=\${prefix}/lib

Name: thrustmap
Description: Lever calibration and rated engine targets for simulators (simulation only, not certified)
Version: $2
Cflags: -I\${includedir}
Libs: -L\${libdir} -lthrustmap
PC
}
