# ratewell_add_module(NAME DIR PUBLIC_LIBS... [PRIVATE PRIVATE_LIBS...]): a
# static library from DIR/*.cc and DIR/detail/*.cc, with the repository root
# as include root. Sources are globbed so that adding a file needs no edit here.
function(ratewell_add_module name dir)
  cmake_parse_arguments(PARSE_ARGV 2 arg "" "" "PUBLIC;PRIVATE")
  file(GLOB sources CONFIGURE_DEPENDS ${dir}/*.cc ${dir}/detail/*.cc)
  list(FILTER sources EXCLUDE REGEX "/main\\.cc$")
  if(sources)
    add_library(${name} STATIC ${sources})
    target_include_directories(${name} PUBLIC ${RATEWELL_INCLUDE_ROOT})
    target_link_libraries(${name} PUBLIC ${arg_PUBLIC} PRIVATE ${arg_PRIVATE})
  else()
    add_library(${name} INTERFACE)
    target_include_directories(${name} INTERFACE ${RATEWELL_INCLUDE_ROOT})
    target_link_libraries(${name} INTERFACE ${arg_PUBLIC})
  endif()
endfunction()
