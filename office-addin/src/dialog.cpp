// The analysis dialog: a protocol handler for URLs "org.lode.calc:analyse" (menu entry and toolbar
// button, package/Addons.xcu) and "org.lode.calc:stop". "analyse" builds the dialog at run time
// (UnoControlDialogModel), prefilled from the selection, and on Run hands the range and the options to
// the AnalysisReport service, which works on a thread of its own with progress in the status bar.
#include "report_uno.hpp"
#include "message_box.hpp"
#include "report_run.hpp"
#include "uno_text.hpp"
#include "option_table.hpp"
#include "report_text.hpp"

#include <cppuhelper/implbase4.hxx>
#include <cppuhelper/supportsservice.hxx>

#include <com/sun/star/awt/XControl.hpp>
#include <com/sun/star/awt/XControlModel.hpp>
#include <com/sun/star/awt/XDialog.hpp>
#include <com/sun/star/awt/XToolkit.hpp>
#include <com/sun/star/awt/XWindowPeer.hpp>
#include <com/sun/star/beans/PropertyValue.hpp>
#include <com/sun/star/beans/XPropertySet.hpp>
#include <com/sun/star/container/XNameContainer.hpp>
#include <com/sun/star/container/XNamed.hpp>
#include <com/sun/star/container/XIndexAccess.hpp>
#include <com/sun/star/frame/XController.hpp>
#include <com/sun/star/frame/XDispatch.hpp>
#include <com/sun/star/frame/XDispatchProvider.hpp>
#include <com/sun/star/frame/XFrame.hpp>
#include <com/sun/star/frame/XModel.hpp>
#include <com/sun/star/lang/XInitialization.hpp>
#include <com/sun/star/lang/XMultiComponentFactory.hpp>
#include <com/sun/star/lang/XMultiServiceFactory.hpp>
#include <com/sun/star/lang/XServiceInfo.hpp>
#include <com/sun/star/sheet/XCellRangeAddressable.hpp>
#include <com/sun/star/sheet/XSheetCellCursor.hpp>
#include <com/sun/star/sheet/XSheetCellRange.hpp>
#include <com/sun/star/sheet/XSpreadsheet.hpp>
#include <com/sun/star/sheet/XSpreadsheetDocument.hpp>
#include <com/sun/star/sheet/XSpreadsheetView.hpp>
#include <com/sun/star/table/CellRangeAddress.hpp>
#include <com/sun/star/task/XStatusIndicatorFactory.hpp>
#include <com/sun/star/uno/XComponentContext.hpp>
#include <com/sun/star/util/URL.hpp>
#include <com/sun/star/view/XSelectionSupplier.hpp>
#include <org/lode/calc/XAnalysisReport.hpp>

#include <mutex>
#include <string>
#include <utility>
#include <vector>

namespace css = com::sun::star;
using css::uno::Any;
using css::uno::Reference;
using css::uno::Sequence;
using css::uno::UNO_QUERY;
using css::uno::UNO_QUERY_THROW;
using rtl::OUString;

namespace lode::addin::report {
namespace {

constexpr const char kProtocol[] = "org.lode.calc:";
constexpr const char kServiceName[] = "org.lode.calc.DialogHandler";
constexpr const char kImplementationName[] = "org.lode.calc.DialogHandlerImpl";

OUString A(const char* s) { return OUString::createFromAscii(s); }

// The one report service of this office: "stop" must reach the run "analyse" started.
Reference<org::lode::calc::XAnalysisReport> shared_report(const Reference<css::uno::XComponentContext>& ctx) {
  // Deliberately never destroyed: releasing a UNO object from a static destructor at exit can run
  // after the office's service manager is gone.
  static std::mutex mutex;
  static auto* report = new Reference<org::lode::calc::XAnalysisReport>();
  std::lock_guard<std::mutex> lock(mutex);
  if (!report->is())
    report->set(ctx->getServiceManager()->createInstanceWithContext(A("org.lode.calc.AnalysisReport"), ctx), UNO_QUERY_THROW);
  return *report;
}

Sequence<OUString> strings(const std::vector<std::string>& v) {
  std::vector<OUString> u;
  for (const auto& s : v) u.push_back(ustr(s));
  return Sequence<OUString>(u.data(), static_cast<sal_Int32>(u.size()));
}


class DialogBuilder {
 public:
  explicit DialogBuilder(const Reference<css::uno::XComponentContext>& ctx) : ctx_(ctx) {
    model_.set(ctx->getServiceManager()->createInstanceWithContext(A("com.sun.star.awt.UnoControlDialogModel"), ctx),
               UNO_QUERY_THROW);
  }
  Reference<css::beans::XPropertySet> dialog_props() { return Reference<css::beans::XPropertySet>(model_, UNO_QUERY_THROW); }

  Reference<css::beans::XPropertySet> add(const char* type, const char* name, sal_Int32 x, sal_Int32 y, sal_Int32 w, sal_Int32 h,
                                          std::vector<std::pair<const char*, Any>> props = {}) {
    Reference<css::lang::XMultiServiceFactory> f(model_, UNO_QUERY_THROW);
    Reference<css::beans::XPropertySet> m(f->createInstance(A(type)), UNO_QUERY_THROW);
    m->setPropertyValue("PositionX", Any(x));
    m->setPropertyValue("PositionY", Any(y));
    m->setPropertyValue("Width", Any(w));
    m->setPropertyValue("Height", Any(h));
    m->setPropertyValue("Name", Any(A(name)));
    for (auto& [k, v] : props) m->setPropertyValue(A(k), v);
    Reference<css::container::XNameContainer>(model_, UNO_QUERY_THROW)->insertByName(A(name), Any(m));
    return m;
  }
  void label(const char* name, const char* text, sal_Int32 x, sal_Int32 y, sal_Int32 w) {
    add("com.sun.star.awt.UnoControlFixedTextModel", name, x, y + 2, w, 10, {{"Label", Any(A(text))}});
  }
  void heading(const char* name, const char* text, sal_Int32 x, sal_Int32 y, sal_Int32 w) {
    add("com.sun.star.awt.UnoControlFixedLineModel", name, x, y, w, 10, {{"Label", Any(A(text))}});
  }
  // A labelled list of one word option, its default selected, its help as the tooltip.
  void dropdown(const WordOption& option, sal_Int32 label_x, sal_Int32 x, sal_Int32 y, sal_Int32 w) {
    label((std::string(option.property) + "Label").c_str(), option.label, label_x, y, x - label_x - 2);
    auto first = static_cast<sal_Int16>(word_index(option, option.fallback));
    add("com.sun.star.awt.UnoControlListBoxModel", option.property, x, y, w, 12,
        {{"Dropdown", Any(true)}, {"StringItemList", Any(strings(word_labels(option)))},
         {"SelectedItems", Any(Sequence<sal_Int16>(&first, 1))}, {"LineCount", Any(sal_Int16(8))},
         {"HelpText", Any(ustr(option.help))}});
  }
  void number(const char* name, double value, double lo, double hi, sal_Int16 decimals, sal_Int32 x, sal_Int32 y, sal_Int32 w) {
    add("com.sun.star.awt.UnoControlNumericFieldModel", name, x, y, w, 12,
        {{"Value", Any(value)}, {"ValueMin", Any(lo)}, {"ValueMax", Any(hi)}, {"DecimalAccuracy", Any(decimals)},
         {"Spin", Any(true)}, {"StrictFormat", Any(true)}});
  }

  Reference<css::beans::XPropertySet> get(const char* name) {
    return Reference<css::beans::XPropertySet>(
        Reference<css::container::XNameContainer>(model_, UNO_QUERY_THROW)->getByName(A(name)), UNO_QUERY_THROW);
  }

  // Shows the dialog modally over `parent`; returns the execute() result (1 = Run).
  sal_Int16 execute(const Reference<css::awt::XWindowPeer>& parent) {
    Reference<css::awt::XControl> dialog(
        ctx_->getServiceManager()->createInstanceWithContext(A("com.sun.star.awt.UnoControlDialog"), ctx_), UNO_QUERY_THROW);
    dialog->setModel(Reference<css::awt::XControlModel>(model_, UNO_QUERY_THROW));
    Reference<css::awt::XToolkit> toolkit(
        ctx_->getServiceManager()->createInstanceWithContext(A("com.sun.star.awt.Toolkit"), ctx_), UNO_QUERY_THROW);
    dialog->createPeer(toolkit, parent);
    Reference<css::awt::XDialog> d(dialog, UNO_QUERY_THROW);
    sal_Int16 result = d->execute();
    Reference<css::lang::XComponent>(dialog, UNO_QUERY_THROW)->dispose();
    return result;
  }

 private:
  Reference<css::uno::XComponentContext> ctx_;
  Reference<css::uno::XInterface> model_;
};

sal_Int16 selected(const Reference<css::beans::XPropertySet>& listbox) {
  Sequence<sal_Int16> sel;
  listbox->getPropertyValue("SelectedItems") >>= sel;
  return sel.getLength() > 0 ? sel[0] : 0;
}
const char* chosen(const WordOption& option, const Reference<css::beans::XPropertySet>& listbox) {
  const sal_Int16 i = selected(listbox);
  const bool inside = i >= 0 && static_cast<std::size_t>(i) < option.words.size();
  return option.words[inside ? static_cast<std::size_t>(i) : word_index(option, option.fallback)].word;
}
double value_of(const Reference<css::beans::XPropertySet>& field) {
  double v = 0;
  field->getPropertyValue("Value") >>= v;
  return v;
}
sal_Int16 state_of(const Reference<css::beans::XPropertySet>& box) {
  sal_Int16 s = 0;
  box->getPropertyValue("State") >>= s;
  return s;
}
css::beans::PropertyValue prop(const char* name, Any value) {
  css::beans::PropertyValue p;
  p.Name = A(name);
  p.Value = std::move(value);
  return p;
}

class DialogHandler : public cppu::WeakImplHelper4<css::frame::XDispatchProvider, css::frame::XDispatch,
                                                   css::lang::XInitialization, css::lang::XServiceInfo> {
 public:
  explicit DialogHandler(const Reference<css::uno::XComponentContext>& ctx) : ctx_(ctx) {}

  // XInitialization: the frame this handler serves.
  void SAL_CALL initialize(const Sequence<Any>& args) override {
    if (args.getLength() > 0) args[0] >>= frame_;
  }

  // XDispatchProvider
  Reference<css::frame::XDispatch> SAL_CALL queryDispatch(const css::util::URL& url, const OUString&, sal_Int32) override {
    if (url.Protocol == A(kProtocol) && (url.Path == "analyse" || url.Path == "stop")) return this;
    return nullptr;
  }
  Sequence<Reference<css::frame::XDispatch>> SAL_CALL
  queryDispatches(const Sequence<css::frame::DispatchDescriptor>& requests) override {
    std::vector<Reference<css::frame::XDispatch>> out;
    for (const auto& r : requests) out.push_back(queryDispatch(r.FeatureURL, r.FrameName, r.SearchFlags));
    return Sequence<Reference<css::frame::XDispatch>>(out.data(), static_cast<sal_Int32>(out.size()));
  }

  // XDispatch
  void SAL_CALL dispatch(const css::util::URL& url, const Sequence<css::beans::PropertyValue>&) override {
    try {
      if (url.Path == "stop") shared_report(ctx_)->cancel();
      else if (url.Path == "analyse") analyse();
    } catch (const css::uno::Exception& e) {
      // nothing leaves the dispatch: the person reads what went wrong in a message box
      show_message(ctx_, frame_, true, "Lode", "Lode could not run the analysis: " + utf8(e.Message));
    } catch (const std::exception& e) {
      show_message(ctx_, frame_, true, "Lode", std::string("Lode could not run the analysis: ") + e.what());
    }
  }
  void SAL_CALL addStatusListener(const Reference<css::frame::XStatusListener>&, const css::util::URL&) override {}
  void SAL_CALL removeStatusListener(const Reference<css::frame::XStatusListener>&, const css::util::URL&) override {}

  // XServiceInfo
  OUString SAL_CALL getImplementationName() override { return A(kImplementationName); }
  sal_Bool SAL_CALL supportsService(const OUString& name) override { return cppu::supportsService(this, name); }
  Sequence<OUString> SAL_CALL getSupportedServiceNames() override { return supported(); }
  static Sequence<OUString> supported() {
    OUString names[] = {A(kServiceName), A("com.sun.star.frame.ProtocolHandler")};
    return Sequence<OUString>(names, 2);
  }

 private:
  // The selection's range; a single cell grows to the block of filled cells around it.
  static bool selection_range(const Reference<css::frame::XController>& controller, css::table::CellRangeAddress& out) {
    Reference<css::view::XSelectionSupplier> sel(controller, UNO_QUERY);
    if (!sel.is()) return false;
    Reference<css::sheet::XCellRangeAddressable> addr(sel->getSelection(), UNO_QUERY);
    if (!addr.is()) return false;
    out = addr->getRangeAddress();
    if (out.StartRow == out.EndRow && out.StartColumn == out.EndColumn) {
      Reference<css::sheet::XSheetCellRange> cell(addr, UNO_QUERY);
      if (cell.is()) {
        Reference<css::sheet::XSheetCellCursor> cursor = cell->getSpreadsheet()->createCursorByRange(cell);
        cursor->collapseToCurrentRegion();
        out = Reference<css::sheet::XCellRangeAddressable>(cursor, UNO_QUERY_THROW)->getRangeAddress();
      }
    }
    return true;
  }

  static std::string range_text(const Reference<css::sheet::XSpreadsheetDocument>& doc, const css::table::CellRangeAddress& a) {
    Reference<css::container::XIndexAccess> sheets(doc->getSheets(), UNO_QUERY_THROW);
    Reference<css::container::XNamed> named(sheets->getByIndex(a.Sheet), UNO_QUERY_THROW);
    return range_address(utf8(named->getName()), a.StartColumn, a.StartRow, a.EndColumn, a.EndRow);
  }

  // "$Sheet.$A$1:$B$9" or "Sheet.A1:B9" or "A1:B9" (on `fallback_sheet`) -> address; false if unreadable.
  static bool parse_range(const Reference<css::sheet::XSpreadsheetDocument>& doc, const std::string& text,
                          sal_Int16 fallback_sheet, css::table::CellRangeAddress& out) {
    try {
      std::string sheet_part, cells;
      split_range_text(text, sheet_part, cells);
      Reference<css::container::XIndexAccess> sheets(doc->getSheets(), UNO_QUERY_THROW);
      Reference<css::sheet::XSpreadsheet> sheet;
      if (sheet_part.empty()) sheet.set(sheets->getByIndex(fallback_sheet), UNO_QUERY_THROW);
      else sheet.set(doc->getSheets()->getByName(ustr(sheet_part)), UNO_QUERY_THROW);
      Reference<css::sheet::XCellRangeAddressable> a(sheet->getCellRangeByName(ustr(cells)), UNO_QUERY_THROW);
      out = a->getRangeAddress();
      return true;
    } catch (...) {
      return false;
    }
  }

  // The right half of the dialog: the analysis's options, the checks of the structure, the groups,
  // and the buttons. `items` are the range's columns (the group column is chosen among them).
  static void analysis_controls(DialogBuilder& b, const std::vector<std::string>& items) {
    const sal_Int32 L = 166, F = 250, W = 136;
    b.heading("AnalysisHeading", "The analysis", L, 4, 220);
    b.dropdown(*find_word_option("Correlation"), L, F, 18, W);
    b.dropdown(*find_word_option("Missing"), L, F, 33, W);
    // The factor count: one field, 0 letting the evidence decide (parallel analysis), so a number
    // typed there is always the one used.
    b.label("FactorsLabel", "Factors to keep", L, 52, 82);
    b.number("FactorCount", 0, 0, 100, 0, F, 52, 30);
    b.label("FactorsHint", "0: as the evidence suggests", F + 34, 53, W - 34);
    b.dropdown(*find_word_option("Extraction"), L, F, 74, W);
    b.dropdown(*find_word_option("Rotation"), L, F, 89, W);
    b.label("RotationParameterLabel", "Rotation setting (0: usual)", L, 104, 82);
    b.number("RotationParameter", 0, -10, 10, 2, F, 104, W);

    b.heading("ExtrasHeading", "Extras", L, 120, 220);
    b.dropdown(*find_word_option("Scores"), L, F, 134, W);
    b.dropdown(*find_word_option("ScoresPlace"), L, F, 149, W);
    b.add("com.sun.star.awt.UnoControlCheckBoxModel", "Bootstrap", L, 165, 82, 10,
          {{"Label", Any(A("Bootstrap intervals"))}, {"State", Any(sal_Int16(0))}});
    b.label("ReplicatesLabel", "Resamples", F, 164, 40);
    b.number("Replicates", 500, 50, 100000, 0, F + 42, 164, W - 42);
    b.label("SalientLabel", "Strong loading from", L, 180, 82);
    b.number("Salient", defaults::salient, 0.05, 0.95, 2, F, 180, W);
    b.label("SeedLabel", "Random seed", L, 195, 82);
    b.number("Seed", 20260101, 0, 9007199254740991.0, 0, F, 195, W);

    // The checks with a sheet of their own (option_table.cpp): a check box, then its number.
    b.heading("ChecksHeading", "Does the structure hold up?", L, 210, 220);
    sal_Int32 y = 224;
    for (const CheckOption& c : check_options()) {
      b.add("com.sun.star.awt.UnoControlCheckBoxModel", c.property, L, y, 220, 10,
            {{"Label", Any(A(c.label))}, {"State", Any(sal_Int16(0))}, {"HelpText", Any(ustr(c.help))}});
      const std::string field = std::string(c.property) + "Value";
      b.label((field + "Label").c_str(), c.number_label, L + 12, y + 13, F - L - 14);
      b.number(field.c_str(), c.on_value, c.lo, c.hi, c.decimals, F, y + 13, W);
      y += 28;
    }

    b.heading("GroupsHeading", "Groups", L, y + 2, 220);
    std::vector<std::string> group_choices{"No comparison"};
    group_choices.insert(group_choices.end(), items.begin(), items.end());
    const sal_Int16 no_group = 0;
    b.label("GroupColumnLabel", kGroupColumnOption.label, L, y + 16, 82);
    b.add("com.sun.star.awt.UnoControlListBoxModel", kGroupColumnOption.property, F, y + 16, W, 12,
          {{"Dropdown", Any(true)}, {"StringItemList", Any(strings(group_choices))},
           {"SelectedItems", Any(Sequence<sal_Int16>(&no_group, 1))}, {"LineCount", Any(sal_Int16(8))},
           {"HelpText", Any(A(kGroupColumnOption.help))}});
    b.label("MinGroupLabel", kMinGroupOption.label, L, y + 31, 82);
    b.number(kMinGroupOption.property, report::kDefaultMinGroup, 2, report::kMaxMinGroup, 0, F, y + 31, W);
    b.get(kMinGroupOption.property)->setPropertyValue("HelpText", Any(A(kMinGroupOption.help)));

    b.add("com.sun.star.awt.UnoControlButtonModel", "Run", 276, 334, 54, 14,
          {{"Label", Any(A("Run"))}, {"PushButtonType", Any(sal_Int16(1))}, {"DefaultButton", Any(true)}});
    b.add("com.sun.star.awt.UnoControlButtonModel", "Cancel", 332, 334, 54, 14,
          {{"Label", Any(A("Cancel"))}, {"PushButtonType", Any(sal_Int16(2))}});
  }

  void analyse() {
    if (!frame_.is()) return;
    Reference<css::frame::XController> controller = frame_->getController();
    if (!controller.is()) return;
    Reference<css::sheet::XSpreadsheetDocument> doc(controller->getModel(), UNO_QUERY);
    if (!doc.is()) return;
    Reference<org::lode::calc::XAnalysisReport> report = shared_report(ctx_);
    if (report->isRunning()) {  // Run during a run: say so instead of ignoring it
      show_message(ctx_, frame_, false, "Lode", already_running_message());
      return;
    }

    css::table::CellRangeAddress range{};
    if (!selection_range(controller, range)) {
      Reference<css::sheet::XSpreadsheetView> view(controller, UNO_QUERY_THROW);
      Reference<css::sheet::XCellRangeAddressable> a(view->getActiveSheet()->getCellRangeByName("A1"), UNO_QUERY_THROW);
      range = a->getRangeAddress();
    }
    Sequence<OUString> columns;
    try {
      columns = report->describeColumns(doc, range, -1);
    } catch (const css::lang::IllegalArgumentException&) {
    }
    const bool header = columns.getLength() > 0 && columns[0] == "header";
    std::vector<std::string> items;
    std::vector<sal_Int16> preselected;
    for (sal_Int32 i = 1; i < columns.getLength(); ++i) {
      std::string c = utf8(columns[i]);
      if (c.empty()) continue;
      if (c[0] == '+') preselected.push_back(static_cast<sal_Int16>(items.size()));
      items.push_back(c.substr(1));
    }

    DialogBuilder b(ctx_);
    auto d = b.dialog_props();
    d->setPropertyValue("Title", Any(A("Lode: find the factors behind a set of items")));
    d->setPropertyValue("Width", Any(sal_Int32(392)));
    d->setPropertyValue("Height", Any(sal_Int32(352)));
    d->setPropertyValue("Name", Any(A("LodeAnalysisDialog")));
    d->setPropertyValue("BackgroundColor", Any(sal_Int32(0xF4F7F1)));  // Lode's pale sage

    // Left: the data.
    b.heading("DataHeading", "The answers", 6, 4, 150);
    b.label("RangeLabel", "Range", 6, 18, 40);
    b.add("com.sun.star.awt.UnoControlEditModel", "Range", 48, 18, 108, 12, {{"Text", Any(ustr(range_text(doc, range)))}});
    b.add("com.sun.star.awt.UnoControlCheckBoxModel", "HeaderRow", 6, 34, 150, 10,
          {{"Label", Any(A("First row holds the item names"))}, {"State", Any(sal_Int16(header ? 1 : 0))}});
    b.label("ItemsLabel", "Items to analyse (all with numbers are chosen)", 6, 48, 150);
    b.add("com.sun.star.awt.UnoControlListBoxModel", "Items", 6, 62, 150, 128,
          {{"MultiSelection", Any(true)}, {"StringItemList", Any(strings(items))},
           {"SelectedItems", Any(Sequence<sal_Int16>(preselected.data(), static_cast<sal_Int32>(preselected.size())))}});
    b.add("com.sun.star.awt.UnoControlFixedTextModel", "Hint", 6, 196, 150, 46,
          {{"MultiLine", Any(true)},
           {"Label", Any(A("The report goes into new sheets; nothing in the workbook is overwritten. "
                           "Progress shows in the status bar; Lode > Stop the running analysis ends a run."))}});

    analysis_controls(b, items);

    Reference<css::awt::XWindowPeer> parent(frame_->getContainerWindow(), UNO_QUERY);
    if (b.execute(parent) != 1) return;

    // Collect the options.
    std::string text;
    {
      OUString t;
      b.get("Range")->getPropertyValue("Text") >>= t;
      text = utf8(t);
    }
    css::table::CellRangeAddress chosen_range = range;
    if (!parse_range(doc, text, range.Sheet, chosen_range)) {
      show_message(ctx_, frame_, true, "Lode", unreadable_range_message(text));
      return;
    }
    const sal_Int16 header_state = state_of(b.get("HeaderRow"));
    Sequence<OUString> names_now = report->describeColumns(doc, chosen_range, header_state);
    Sequence<sal_Int16> sel;
    b.get("Items")->getPropertyValue("SelectedItems") >>= sel;
    std::vector<OUString> chosen_items;
    const bool same_columns = names_now.getLength() == static_cast<sal_Int32>(items.size()) + 1 &&
                              chosen_range.StartColumn == range.StartColumn && chosen_range.EndColumn == range.EndColumn &&
                              header_state == (header ? 1 : 0);
    if (same_columns)  // the list still describes the range: pass the items chosen in it
      for (sal_Int16 i : sel)
        if (i >= 0 && static_cast<std::size_t>(i) < items.size()) chosen_items.push_back(ustr(items[static_cast<std::size_t>(i)]));

    std::vector<css::beans::PropertyValue> opts;
    opts.push_back(prop("HeaderRow", Any(sal_Int32(header_state))));
    if (!chosen_items.empty())
      opts.push_back(prop("Items", Any(Sequence<OUString>(chosen_items.data(), static_cast<sal_Int32>(chosen_items.size())))));
    for (const WordOption& w : word_options()) opts.push_back(prop(w.property, Any(A(chosen(w, b.get(w.property))))));
    opts.push_back(prop("Factors", Any(sal_Int32(value_of(b.get("FactorCount"))))));
    opts.push_back(prop("RotationParameter", Any(value_of(b.get("RotationParameter")))));
    opts.push_back(prop("Bootstrap", Any(sal_Int32(state_of(b.get("Bootstrap")) ? value_of(b.get("Replicates")) : 0))));
    for (const CheckOption& c : check_options()) {  // 0 = off
      const double v = state_of(b.get(c.property)) ? value_of(b.get((std::string(c.property) + "Value").c_str())) : 0.0;
      opts.push_back(prop(c.property, c.decimals > 0 ? Any(v) : Any(sal_Int32(v))));
    }
    opts.push_back(prop("Salient", Any(value_of(b.get("Salient")))));
    opts.push_back(prop("Seed", Any(static_cast<sal_Int64>(value_of(b.get("Seed"))))));
    // The group column by name, when the list still describes the range (its first entry: no comparison).
    const sal_Int16 group = selected(b.get(kGroupColumnOption.property));
    if (same_columns && group > 0 && static_cast<std::size_t>(group) <= items.size())
      opts.push_back(prop(kGroupColumnOption.property, Any(ustr(items[static_cast<std::size_t>(group - 1)]))));
    opts.push_back(prop(kMinGroupOption.property, Any(sal_Int32(value_of(b.get(kMinGroupOption.property))))));

    Reference<css::task::XStatusIndicator> indicator;
    Reference<css::task::XStatusIndicatorFactory> f(frame_, UNO_QUERY);
    if (f.is()) indicator = f->createStatusIndicator();
    if (!report->start(doc, chosen_range, Sequence<css::beans::PropertyValue>(opts.data(), static_cast<sal_Int32>(opts.size())),
                       indicator))
      show_message(ctx_, frame_, false, "Lode", already_running_message());
  }

  Reference<css::uno::XComponentContext> ctx_;
  Reference<css::frame::XFrame> frame_;
};

}  // namespace

Reference<css::uno::XInterface> SAL_CALL create_dialog_handler(const Reference<css::uno::XComponentContext>& ctx) {
  return static_cast<cppu::OWeakObject*>(new DialogHandler(ctx));
}
OUString SAL_CALL dialog_handler_implementation_name() { return A(kImplementationName); }
Sequence<OUString> SAL_CALL dialog_handler_service_names() { return DialogHandler::supported(); }

}  // namespace lode::addin::report
