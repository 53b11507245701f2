// The UNO component: service com.sun.star.sheet.AddIn for Calc. It converts cell values into
// Lode's plain types (cells.hpp), runs the function from the table, and turns the result or the
// failure into what Calc shows. Nothing escapes this boundary except the two UNO exceptions Calc
// maps to documented error values.
#include "convert.hpp"
#include "uno_text.hpp"
#include "report_uno.hpp"
#include "functions.hpp"
#include "table.hpp"

#include <cppuhelper/factory.hxx>
#include <cppuhelper/implementationentry.hxx>
#include <cppuhelper/implbase4.hxx>
#include <cppuhelper/supportsservice.hxx>

#include <com/sun/star/lang/IllegalArgumentException.hpp>
#include <com/sun/star/lang/Locale.hpp>
#include <com/sun/star/lang/XServiceInfo.hpp>
#include <com/sun/star/lang/XServiceName.hpp>
#include <com/sun/star/sheet/NoConvergenceException.hpp>
#include <com/sun/star/sheet/XAddIn.hpp>
#include <com/sun/star/uno/XComponentContext.hpp>
#include <org/lode/calc/XCellFunctions.hpp>

#include <new>
#include <vector>

namespace css = com::sun::star;
using css::uno::Any;
using css::uno::Reference;
using css::uno::Sequence;
using rtl::OUString;

namespace {

using namespace lode::addin;

constexpr const char kServiceName[] = "org.lode.calc.CellFunctions";
constexpr const char kImplementationName[] = "org.lode.calc.CellFunctionsImpl";
constexpr const char kAddInService[] = "com.sun.star.sheet.AddIn";


// One argument as the generated methods pass it on: a range or an optional value.
struct UnoArg {
  const Sequence<Sequence<Any>>* range = nullptr;
  const Any* value = nullptr;
  explicit UnoArg(const Sequence<Sequence<Any>>& r) : range(&r) {}
  explicit UnoArg(const Any& v) : value(&v) {}
};

class CellFunctions : public cppu::WeakImplHelper4<org::lode::calc::XCellFunctions, css::sheet::XAddIn,
                                                   css::lang::XServiceName, css::lang::XServiceInfo> {
 public:
  CellFunctions() = default;

  // org.lode.calc.XCellFunctions: one method per table row, generated.
#include "lode_methods.inc"

  // XAddIn
  OUString SAL_CALL getProgrammaticFuntionName(const OUString& display) override {
    const FunctionSpec* f = find_by_display(utf8(display));
    return f ? ustr(f->method) : OUString();
  }
  OUString SAL_CALL getDisplayFunctionName(const OUString& m) override { return ustr(addin_text(utf8(m), AddinText::display)); }
  OUString SAL_CALL getFunctionDescription(const OUString& m) override { return ustr(addin_text(utf8(m), AddinText::description)); }
  OUString SAL_CALL getDisplayArgumentName(const OUString& m, sal_Int32 n) override {
    return ustr(addin_text(utf8(m), AddinText::argument_name, n));
  }
  OUString SAL_CALL getArgumentDescription(const OUString& m, sal_Int32 n) override {
    return ustr(addin_text(utf8(m), AddinText::argument_help, n));
  }
  OUString SAL_CALL getProgrammaticCategoryName(const OUString&) override { return ustr(kCategory); }
  OUString SAL_CALL getDisplayCategoryName(const OUString&) override { return ustr(kCategoryDisplay); }

  // XLocalizable (texts are English only for now)
  void SAL_CALL setLocale(const css::lang::Locale& locale) override { locale_ = locale; }
  css::lang::Locale SAL_CALL getLocale() override { return locale_; }

  // XServiceName
  OUString SAL_CALL getServiceName() override { return OUString(kServiceName); }

  // XServiceInfo
  OUString SAL_CALL getImplementationName() override { return OUString(kImplementationName); }
  sal_Bool SAL_CALL supportsService(const OUString& name) override { return cppu::supportsService(this, name); }
  Sequence<OUString> SAL_CALL getSupportedServiceNames() override { return supported_services(); }

  static Sequence<OUString> supported_services() {
    OUString names[] = {OUString(kServiceName), OUString(kAddInService)};
    return Sequence<OUString>(names, 2);
  }

 private:
  // Runs row `index` of the table. Every failure becomes a documented cell result here.
  Any invoke(std::size_t index, std::initializer_list<UnoArg> uno_args) {
    const FunctionSpec* spec = index < function_table().size() ? &function_table()[index] : nullptr;
    try {
      const FunctionSpec& f = function_table().at(index);
      std::vector<Arg> args;
      args.reserve(uno_args.size());
      std::size_t i = 0;
      for (const UnoArg& a : uno_args) {
        args.push_back(a.range ? arg_from_range(*a.range, f.args[i].name) : arg_from_value(*a.value, f.args[i].name));
        ++i;
      }
      return to_any(f.compute(Call{args, cache_, Deadline{}}));
    } catch (...) {
      const auto [failure, message] = failure_of(std::current_exception());
      // LODE.REASON answers in text even when its own arguments cannot be read (e.g. a range too large)
      if (spec != nullptr && spec->compute == &fn_reason) return Any(ustr(reason_text(failure, message)));
      return failure_to_any(failure, message, static_cast<cppu::OWeakObject&>(*this));
    }
  }

  css::lang::Locale locale_;
  ResultCache cache_;
};

Reference<css::uno::XInterface> SAL_CALL create(const Reference<css::uno::XComponentContext>&) {
  return static_cast<cppu::OWeakObject*>(new CellFunctions);
}
OUString SAL_CALL implementation_name() { return OUString(kImplementationName); }
Sequence<OUString> SAL_CALL service_names() { return CellFunctions::supported_services(); }

const cppu::ImplementationEntry kEntries[] = {
    {create, implementation_name, service_names, cppu::createSingleComponentFactory, nullptr, 0},
    // the analysis dialog and the report service behind it (report_uno.cpp, dialog.cpp)
    {lode::addin::report::create_analysis_report, lode::addin::report::analysis_report_implementation_name,
     lode::addin::report::analysis_report_service_names, cppu::createSingleComponentFactory, nullptr, 0},
    {lode::addin::report::create_dialog_handler, lode::addin::report::dialog_handler_implementation_name,
     lode::addin::report::dialog_handler_service_names, cppu::createSingleComponentFactory, nullptr, 0},
    {nullptr, nullptr, nullptr, nullptr, nullptr, 0},
};

}  // namespace

extern "C" SAL_DLLPUBLIC_EXPORT void* SAL_CALL component_getFactory(const char* implementation, void* service_manager,
                                                                    void* registry_key) {
  return cppu::component_getFactoryHelper(implementation, service_manager, registry_key, kEntries);
}
