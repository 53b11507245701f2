# The analysis dialog and the report service (included by office-addin/CMakeLists.txt): their own
# IDL (idl/XAnalysisReport.idl -> lode_report.rdb), sources added to the component, and the menu,
# toolbar and protocol-handler configuration added to the extension through LODE_OXT_EXTRA.
set(LODE_REPORT_IDL ${CMAKE_CURRENT_SOURCE_DIR}/idl/XAnalysisReport.idl)
add_custom_command(
  OUTPUT ${GEN}/lode_report.rdb
  COMMAND ${LODE_UNOIDL_WRITE} ${LODE_LO_TYPES} ${LODE_REPORT_IDL} ${GEN}/lode_report.rdb
  DEPENDS ${LODE_REPORT_IDL}
  COMMENT "unoidl-write lode_report.rdb")
set(_report_x)
foreach(t ${LODE_LO_TYPES})
  list(APPEND _report_x -X${t})
endforeach()
add_custom_command(
  OUTPUT ${GEN}/inc/org/lode/calc/XAnalysisReport.hpp
  COMMAND ${LODE_CPPUMAKER} -Gc -O${GEN}/inc ${_report_x} ${GEN}/lode_report.rdb
  DEPENDS ${GEN}/lode_report.rdb
  COMMENT "cppumaker: C++ headers of the report service")
add_custom_target(lode_report_types DEPENDS ${GEN}/inc/org/lode/calc/XAnalysisReport.hpp)

# The report's model, analysis and sheet layouts are UNO-free (C ABI only) and live in the logic
# library, where the add-in's unit tests reach them; report_uno.cpp and dialog.cpp are the UNO side.
target_sources(lode_addin_logic PRIVATE src/report_model.cpp src/report_analysis.cpp src/report_analysis_confirm.cpp src/report_text.cpp
  src/layout_overview.cpp src/layout_loadings.cpp src/layout_factors.cpp src/layout_scree.cpp src/layout_record.cpp
  src/layout_scores.cpp src/layout_replication.cpp src/layout_holdout.cpp src/option_table.cpp src/report_run.cpp
  src/report_analysis_structure.cpp src/layout_general.cpp src/layout_groups.cpp)
target_sources(lode_calc PRIVATE src/report_uno.cpp src/dialog.cpp src/message_box.cpp)
add_dependencies(lode_calc lode_report_types)

list(APPEND LODE_OXT_EXTRA ${GEN}/lode_report.rdb ${PKG}/Addons.xcu ${PKG}/ProtocolHandler.xcu ${PKG}/lode-16.png
     ${PKG}/lode-26.png)

# For the office tests: the service's type library (their Python needs it) and the program folder.
set_property(GLOBAL PROPERTY LODE_REPORT_RDB ${GEN}/lode_report.rdb)
