// Factories of the report's UNO services, registered by component.cpp's component_getFactory.
#pragma once

#include <com/sun/star/uno/Reference.hxx>
#include <com/sun/star/uno/Sequence.hxx>
#include <com/sun/star/uno/XComponentContext.hpp>
#include <rtl/ustring.hxx>

namespace lode::addin::report {

// org.lode.calc.AnalysisReport (report_uno.cpp): the work behind the dialog.
com::sun::star::uno::Reference<com::sun::star::uno::XInterface> SAL_CALL
create_analysis_report(const com::sun::star::uno::Reference<com::sun::star::uno::XComponentContext>&);
rtl::OUString SAL_CALL analysis_report_implementation_name();
com::sun::star::uno::Sequence<rtl::OUString> SAL_CALL analysis_report_service_names();

// org.lode.calc.DialogHandler (dialog.cpp): the protocol handler behind the menu entry and button.
com::sun::star::uno::Reference<com::sun::star::uno::XInterface> SAL_CALL
create_dialog_handler(const com::sun::star::uno::Reference<com::sun::star::uno::XComponentContext>&);
rtl::OUString SAL_CALL dialog_handler_implementation_name();
com::sun::star::uno::Sequence<rtl::OUString> SAL_CALL dialog_handler_service_names();

}  // namespace lode::addin::report
