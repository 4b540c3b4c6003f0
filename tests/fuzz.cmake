# The fuzz targets and the replay of their committed corpus (tests/fuzz/CMakeLists.txt).
add_subdirectory(${CMAKE_CURRENT_LIST_DIR}/fuzz ${CMAKE_CURRENT_BINARY_DIR}/fuzz)
