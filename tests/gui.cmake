# The bench window under Xvfb (tests/gui_test.sh): a screenshot checked for the trace, markers and waterfall, and
# a run driven with xdotool whose state dump must show the change. Skipped (77) without xvfb-run / xdotool.
if(HETBENCH_GUI)
  add_executable(gui_check gui_check.cpp)
  target_link_libraries(gui_check PRIVATE hetbench_app)
  foreach(mode screenshot drive)
    add_test(NAME GuiWindow.${mode}
             COMMAND bash ${CMAKE_CURRENT_SOURCE_DIR}/gui_test.sh ${mode} $<TARGET_FILE:hetbench> $<TARGET_FILE:gui_check>)
    set_tests_properties(GuiWindow.${mode} PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 120 RESOURCE_LOCK gui_window)
  endforeach()
  # The window runs the generator module; the tests need it built.
  add_dependencies(gui_check hetbench hetbench_gen)
endif()
