# cmake -DFILES="a.so;b.so" -P origin_rpath.cmake
# Points the RUNPATH of each shared library at its own folder ($ORIGIN):
# the SUNDIALS libraries copied beside the module find one another there,
# not in the build folder they came from (which pip removes).
foreach(f IN LISTS FILES)
  file(RPATH_SET FILE "${f}" NEW_RPATH "$ORIGIN")
endforeach()
