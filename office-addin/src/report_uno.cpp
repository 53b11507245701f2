// The UNO service org.lode.calc.AnalysisReport: reads the source range, runs report_model (UNO-free,
// over the C ABI), and writes the report into new sheets. Writes only into sheets it creates; a
// failure or a cancellation removes what it wrote (sheets and the cell styles it added) and restores
// the document's modified state.
#include "report_uno.hpp"
#include "message_box.hpp"
#include "uno_text.hpp"
#include "option_table.hpp"

#include "report_model.hpp"
#include "report_run.hpp"
#include "report_styles.hpp"
#include "report_text.hpp"

#include <cppuhelper/implbase2.hxx>
#include <cppuhelper/supportsservice.hxx>
#include <rtl/ref.hxx>

#include <com/sun/star/awt/Rectangle.hpp>
#include <com/sun/star/beans/XPropertySet.hpp>
#include <com/sun/star/awt/Point.hpp>
#include <com/sun/star/chart/XAxisXSupplier.hpp>
#include <com/sun/star/chart/XAxisYSupplier.hpp>
#include <com/sun/star/chart/XChartDocument.hpp>
#include <com/sun/star/container/XNamed.hpp>
#include <com/sun/star/chart/XDiagram.hpp>
#include <com/sun/star/container/XIndexAccess.hpp>
#include <com/sun/star/container/XNameContainer.hpp>
#include <com/sun/star/document/XEmbeddedObjectSupplier.hpp>
#include <com/sun/star/frame/XController.hpp>
#include <com/sun/star/frame/XFrame.hpp>
#include <com/sun/star/frame/XModel.hpp>
#include <com/sun/star/i18n/LocaleData2.hpp>
#include <com/sun/star/lang/IllegalArgumentException.hpp>
#include <com/sun/star/lang/Locale.hpp>
#include <com/sun/star/lang/XMultiServiceFactory.hpp>
#include <com/sun/star/lang/XServiceInfo.hpp>
#include <com/sun/star/awt/FontSlant.hpp>
#include <com/sun/star/sheet/CellFlags.hpp>
#include <com/sun/star/sheet/XCellRangeData.hpp>
#include <com/sun/star/sheet/XCellRangesQuery.hpp>
#include <com/sun/star/sheet/XSheetAnnotations.hpp>
#include <com/sun/star/sheet/XSheetAnnotationsSupplier.hpp>
#include <com/sun/star/sheet/XSheetCellRanges.hpp>
#include <com/sun/star/sheet/XSheetOperation.hpp>
#include <com/sun/star/table/CellAddress.hpp>
#include <com/sun/star/sheet/XSpreadsheet.hpp>
#include <com/sun/star/sheet/XSpreadsheets.hpp>
#include <com/sun/star/sheet/XSpreadsheetView.hpp>
#include <com/sun/star/style/XStyleFamiliesSupplier.hpp>
#include <com/sun/star/table/XCell.hpp>
#include <com/sun/star/table/XCellRange.hpp>
#include <com/sun/star/table/XColumnRowRange.hpp>
#include <com/sun/star/table/XTableChart.hpp>
#include <com/sun/star/table/XTableCharts.hpp>
#include <com/sun/star/table/XTableChartsSupplier.hpp>
#include <com/sun/star/text/XText.hpp>
#include <com/sun/star/uno/RuntimeException.hpp>
#include <com/sun/star/util/XModifiable.hpp>
#include <com/sun/star/util/XNumberFormats.hpp>
#include <com/sun/star/util/XNumberFormatsSupplier.hpp>
#include <org/lode/calc/XAnalysisReport.hpp>

#include <algorithm>
#include <memory>
#include <cmath>
#include <cstdio>
#include <limits>
#include <stdexcept>
#include <thread>

namespace css = com::sun::star;
using css::uno::Any;
using css::uno::Reference;
using css::uno::Sequence;
using css::uno::UNO_QUERY;
using css::uno::UNO_QUERY_THROW;
using rtl::OUString;

namespace lode::addin::report {
namespace {

constexpr const char kServiceName[] = "org.lode.calc.AnalysisReport";
constexpr const char kImplementationName[] = "org.lode.calc.AnalysisReportImpl";


// ---- options from named values: UNO's Any as plain values, read by options_from (option_table.cpp)
OptionValue plain_option(const css::beans::PropertyValue& p) {
  OptionValue v;
  v.name = utf8(p.Name);
  OUString text;
  sal_Int64 whole = 0;
  Sequence<OUString> list;
  if (p.Value >>= text) {
    v.kind = OptionValue::Kind::text;
    v.text = utf8(text);
  } else if (p.Value >>= whole) {
    v.kind = OptionValue::Kind::integer;
    v.integer = whole;
    v.number = static_cast<double>(whole);
  } else if (p.Value >>= v.number) {
    v.kind = OptionValue::Kind::number;
  } else if (p.Value >>= list) {
    v.kind = OptionValue::Kind::list;
    for (const OUString& s : list) v.list.push_back(utf8(s));
  }
  return v;
}
Options options_from(const Sequence<css::beans::PropertyValue>& props) {
  std::vector<OptionValue> values;
  for (const css::beans::PropertyValue& p : props) values.push_back(plain_option(p));
  return options_from(values);
}

// ---- reading the source range ------------------------------------------------------------------
// What counts as content: a value, a date, text, a formula or a comment (formatting alone does not).
constexpr sal_Int32 kContent = css::sheet::CellFlags::VALUE | css::sheet::CellFlags::DATETIME | css::sheet::CellFlags::STRING |
                               css::sheet::CellFlags::ANNOTATION | css::sheet::CellFlags::FORMULA;

// The first column in [from, to] (rows top..bottom) holding content, or to + 1 when none does.
sal_Int32 first_filled_column(const Reference<css::sheet::XSpreadsheet>& sheet, sal_Int32 from, sal_Int32 to, sal_Int32 top,
                              sal_Int32 bottom) {
  Reference<css::sheet::XCellRangesQuery> q(sheet->getCellRangeByPosition(from, top, to, bottom), UNO_QUERY_THROW);
  Reference<css::sheet::XSheetCellRanges> hits = q->queryContentCells(static_cast<sal_Int16>(kContent));
  sal_Int32 first = to + 1;
  // LibreOffice 7.4 can answer a query over columns that were never used with content from the last
  // used column, outside the range asked about: only what lies inside the range counts.
  if (hits.is())
    for (const css::table::CellRangeAddress& r : hits->getRangeAddresses())
      if (r.EndColumn >= from && r.StartColumn <= to && r.EndRow >= top && r.StartRow <= bottom)
        first = std::min(first, std::max(r.StartColumn, from));
  return first;
}

// Empty columns directly right of the range (over its rows), counted up to 101.
std::size_t free_columns_right(const Reference<css::sheet::XSpreadsheet>& sheet, const css::table::CellRangeAddress& a) {
  Reference<css::table::XColumnRowRange> crr(sheet, UNO_QUERY_THROW);
  const sal_Int32 last = crr->getColumns()->getCount() - 1;
  if (a.EndColumn >= last) return 0;
  const sal_Int32 to = std::min(last, a.EndColumn + 101);
  return static_cast<std::size_t>(first_filled_column(sheet, a.EndColumn + 1, to, a.StartRow, a.EndRow) - (a.EndColumn + 1));
}

SourceTable read_source(const Reference<css::sheet::XSpreadsheetDocument>& doc, const css::table::CellRangeAddress& a) {
  if (!doc.is()) throw std::invalid_argument("no document given");
  Reference<css::container::XIndexAccess> sheets(doc->getSheets(), UNO_QUERY_THROW);
  if (a.Sheet < 0 || a.Sheet >= sheets->getCount()) throw std::invalid_argument("the source range names no sheet of this document");
  if (a.EndRow < a.StartRow || a.EndColumn < a.StartColumn || a.StartRow < 0 || a.StartColumn < 0)
    throw std::invalid_argument("the source range is empty");
  const std::size_t rows = static_cast<std::size_t>(a.EndRow - a.StartRow + 1);
  const std::size_t cols = static_cast<std::size_t>(a.EndColumn - a.StartColumn + 1);
  if (rows * cols > 20'000'000) throw std::invalid_argument("the source range is larger than 20 million cells");
  Reference<css::sheet::XSpreadsheet> sheet(sheets->getByIndex(a.Sheet), UNO_QUERY_THROW);
  Reference<css::container::XNamed> named(sheet, UNO_QUERY_THROW);
  Reference<css::sheet::XCellRangeData> data(
      sheet->getCellRangeByPosition(a.StartColumn, a.StartRow, a.EndColumn, a.EndRow), UNO_QUERY_THROW);
  const Sequence<Sequence<Any>> arr = data->getDataArray();
  SourceTable t;
  t.rows = rows;
  t.cols = cols;
  t.cells.resize(rows * cols);
  for (std::size_t r = 0; r < rows && r < static_cast<std::size_t>(arr.getLength()); ++r)
    for (std::size_t c = 0; c < cols && c < static_cast<std::size_t>(arr[r].getLength()); ++c) {
      const Any& v = arr[r][c];
      SourceCell& s = t.cells[r * cols + c];
      double d = 0;
      OUString str;
      if (v >>= d) {
        s.kind = SourceCell::Kind::number;
        s.number = d;
      } else if ((v >>= str) && !str.isEmpty()) {
        s.kind = SourceCell::Kind::text;
        s.text = utf8(str);
      }
    }
  for (std::size_t c = 0; c < cols; ++c) t.column_letters.push_back(column_letters(a.StartColumn + static_cast<sal_Int32>(c)));
  t.sheet_name = utf8(named->getName());
  t.first_column = static_cast<std::size_t>(a.StartColumn);
  t.first_row = static_cast<std::size_t>(a.StartRow);
  t.free_columns_right = free_columns_right(sheet, a);
  t.address = range_address(utf8(named->getName()), a.StartColumn, a.StartRow, a.EndColumn, a.EndRow);
  return t;
}

// ---- writing -----------------------------------------------------------------------------------
class Writer {
 public:
  explicit Writer(const Reference<css::sheet::XSpreadsheetDocument>& doc) : doc_(doc) {
    Reference<css::util::XModifiable> mod(doc, UNO_QUERY);
    was_modified_ = mod.is() && mod->isModified();
  }

  void ensure_styles() {
    Reference<css::style::XStyleFamiliesSupplier> fam(doc_, UNO_QUERY_THROW);
    Reference<css::container::XNameContainer> cell_styles(fam->getStyleFamilies()->getByName("CellStyles"), UNO_QUERY_THROW);
    Reference<css::lang::XMultiServiceFactory> factory(doc_, UNO_QUERY_THROW);
    Reference<css::util::XNumberFormatsSupplier> nfs(doc_, UNO_QUERY_THROW);
    Reference<css::util::XNumberFormats> formats = nfs->getNumberFormats();
    css::lang::Locale locale;
    for (const StyleLook& s : kLooks) {
      const OUString name = OUString::createFromAscii(s.name);
      if (cell_styles->hasByName(name)) continue;  // an earlier run's (or the user's own edit of it)
      Reference<css::beans::XPropertySet> st(factory->createInstance("com.sun.star.style.CellStyle"), UNO_QUERY_THROW);
      cell_styles->insertByName(name, Any(st));
      created_styles_.push_back(name);
      if (s.back >= 0) {
        st->setPropertyValue("CellBackColor", Any(s.back));
        st->setPropertyValue("IsCellBackgroundTransparent", Any(false));
      }
      if (s.color >= 0) st->setPropertyValue("CharColor", Any(s.color));
      if (s.bold) st->setPropertyValue("CharWeight", Any(150.0f));
      if (s.italic) st->setPropertyValue("CharPosture", Any(css::awt::FontSlant_ITALIC));
      if (s.height > 0) st->setPropertyValue("CharHeight", Any(s.height));
      if (s.format) {
        const OUString code = OUString::createFromAscii(s.format);
        sal_Int32 key = formats->queryKey(code, locale, false);
        if (key < 0) key = formats->addNew(code, locale);
        st->setPropertyValue("NumberFormat", Any(key));
      }
    }
  }

  // A name not yet used in the workbook: the base, else "base 2", "base 3", ...
  OUString unique_name(const std::string& base) {
    Reference<css::container::XNameAccess> names(doc_->getSheets(), UNO_QUERY_THROW);
    OUString name = ustr(base);
    for (int k = 2; names->hasByName(name); ++k) name = ustr(base + " " + std::to_string(k));
    return name;
  }

  OUString write_sheet(const Sheet& s, const std::vector<std::pair<std::string, OUString>>& renames) {
    Reference<css::sheet::XSpreadsheets> sheets = doc_->getSheets();
    Reference<css::container::XIndexAccess> idx(sheets, UNO_QUERY_THROW);
    const OUString name = unique_name(s.base_name);
    sheets->insertNewByName(name, static_cast<sal_Int16>(idx->getCount()));
    created_sheets_.push_back(name);
    Reference<css::sheet::XSpreadsheet> sheet(sheets->getByName(name), UNO_QUERY_THROW);
    for (std::size_t r = 0; r < s.rows.size(); ++r)
      for (std::size_t c = 0; c < s.rows[r].size(); ++c) {
        const Cell& cell = s.rows[r][c];
        Reference<css::table::XCell> xc = sheet->getCellByPosition(static_cast<sal_Int32>(c), static_cast<sal_Int32>(r));
        if (cell.kind == Cell::Kind::number) xc->setValue(cell.number);
        else if (cell.kind == Cell::Kind::text) {
          OUString text = ustr(cell.text);
          for (const auto& [base, actual] : renames)
            if (cell.text == base) text = actual;  // the report's own sheet names, as they ended up
          Reference<css::text::XText>(xc, UNO_QUERY_THROW)->setString(text);
        }
        if (!cell.style.empty())
          Reference<css::beans::XPropertySet>(xc, UNO_QUERY_THROW)
              ->setPropertyValue("CellStyle", Any(OUString::createFromAscii(cell.style.c_str())));
      }
    Reference<css::table::XColumnRowRange> crr(sheet, UNO_QUERY_THROW);
    Reference<css::container::XIndexAccess> columns(crr->getColumns(), UNO_QUERY_THROW);
    for (std::size_t c = 0; c < s.column_widths.size(); ++c)
      if (s.column_widths[c] > 0)
        Reference<css::beans::XPropertySet>(columns->getByIndex(static_cast<sal_Int32>(c)), UNO_QUERY_THROW)
            ->setPropertyValue("Width", Any(static_cast<sal_Int32>(s.column_widths[c])));
    for (const Chart& ch : s.charts) add_chart(sheet, ch);
    return name;
  }

  // The factor scores in new columns right of the source range, only if they are still empty (they
  // were when the run began; the user may have typed there since). Recorded for rollback first.
  void write_beside(const css::table::CellRangeAddress& source, const Beside& b) {
    Reference<css::container::XIndexAccess> sheets(doc_->getSheets(), UNO_QUERY_THROW);
    Reference<css::sheet::XSpreadsheet> sheet(sheets->getByIndex(source.Sheet), UNO_QUERY_THROW);
    const sal_Int32 left = source.EndColumn + 1, right = source.EndColumn + static_cast<sal_Int32>(b.columns);
    Reference<css::table::XColumnRowRange> crr(sheet, UNO_QUERY_THROW);
    if (b.columns == 0 || right >= crr->getColumns()->getCount() ||
        first_filled_column(sheet, left, right, source.StartRow, source.EndRow) <= right)
      throw std::invalid_argument("the cells right of the data are no longer empty (" + b.where +
                                  "); Lode never overwrites cells, so nothing was written");
    beside_ = Reference<css::sheet::XSheetOperation>(
        sheet->getCellRangeByPosition(left, source.StartRow, right, source.EndRow), UNO_QUERY_THROW);
    for (std::size_t r = 0; r < b.rows.size(); ++r)
      for (std::size_t c = 0; c < b.rows[r].size() && c < b.columns; ++c) {
        const Cell& cell = b.rows[r][c];
        if (cell.kind == Cell::Kind::empty) continue;
        Reference<css::table::XCell> xc =
            sheet->getCellByPosition(left + static_cast<sal_Int32>(c), source.StartRow + static_cast<sal_Int32>(r));
        if (cell.kind == Cell::Kind::number) xc->setValue(cell.number);
        else Reference<css::text::XText>(xc, UNO_QUERY_THROW)->setString(ustr(cell.text));
      }
    Reference<css::sheet::XSheetAnnotationsSupplier> ann(sheet, UNO_QUERY_THROW);
    for (std::size_t c = 0; c < b.header_comments.size() && c < b.columns; ++c) {
      css::table::CellAddress at;
      at.Sheet = source.Sheet;
      at.Column = left + static_cast<sal_Int32>(c);
      at.Row = source.StartRow;
      ann->getAnnotations()->insertNew(at, ustr(b.header_comments[c]));
    }
  }

  void rollback() noexcept {
    try {
      if (beside_.is()) beside_->clearContents(kContent);  // the columns were empty before the run
      beside_.clear();
      Reference<css::sheet::XSpreadsheets> sheets = doc_->getSheets();
      for (const OUString& n : created_sheets_)
        if (sheets->hasByName(n)) sheets->removeByName(n);
      created_sheets_.clear();
      Reference<css::style::XStyleFamiliesSupplier> fam(doc_, UNO_QUERY_THROW);
      Reference<css::container::XNameContainer> cell_styles(fam->getStyleFamilies()->getByName("CellStyles"), UNO_QUERY_THROW);
      for (const OUString& n : created_styles_)
        if (cell_styles->hasByName(n)) cell_styles->removeByName(n);
      created_styles_.clear();
      Reference<css::util::XModifiable> mod(doc_, UNO_QUERY);
      if (mod.is()) mod->setModified(was_modified_);
    } catch (...) {
    }
  }

 private:
  void add_chart(const Reference<css::sheet::XSpreadsheet>& sheet, const Chart& ch) {
    Reference<css::table::XTableChartsSupplier> sup(sheet, UNO_QUERY_THROW);
    Reference<css::table::XTableCharts> charts = sup->getCharts();
    Reference<css::container::XNamed> named(sheet, UNO_QUERY_THROW);
    Reference<css::sheet::XSpreadsheets> sheets = doc_->getSheets();
    Reference<css::container::XIndexAccess> idx(sheets, UNO_QUERY_THROW);
    sal_Int16 sheet_index = 0;
    for (sal_Int32 i = 0; i < idx->getCount(); ++i) {
      Reference<css::container::XNamed> s(idx->getByIndex(i), UNO_QUERY);
      if (s.is() && s->getName() == named->getName()) sheet_index = static_cast<sal_Int16>(i);
    }
    css::table::CellRangeAddress range;
    range.Sheet = sheet_index;
    range.StartColumn = static_cast<sal_Int32>(ch.left);
    range.StartRow = static_cast<sal_Int32>(ch.top);
    range.EndColumn = static_cast<sal_Int32>(ch.left + ch.cols - 1);
    range.EndRow = static_cast<sal_Int32>(ch.top + ch.rows - 1);
    // The anchor: the position of the anchor cell, in 1/100 mm.
    Reference<css::beans::XPropertySet> anchor(
        sheet->getCellByPosition(static_cast<sal_Int32>(ch.anchor_col), static_cast<sal_Int32>(ch.anchor_row)), UNO_QUERY_THROW);
    css::awt::Point pos;
    anchor->getPropertyValue("Position") >>= pos;
    css::awt::Rectangle rect(pos.X, pos.Y, 16000, 9000);
    // Chart names are unique in the whole document: the sheet's (unique) name makes them so.
    const OUString chart_name = ustr(ch.name + " on " + utf8(named->getName()));
    charts->addNewByName(chart_name, rect, Sequence<css::table::CellRangeAddress>(&range, 1), true, true);
    Reference<css::document::XEmbeddedObjectSupplier> emb(charts->getByName(chart_name), UNO_QUERY_THROW);
    Reference<css::chart::XChartDocument> cd(emb->getEmbeddedObject(), UNO_QUERY_THROW);
    Reference<css::lang::XMultiServiceFactory> cf(cd, UNO_QUERY_THROW);
    cd->setDiagram(Reference<css::chart::XDiagram>(cf->createInstance("com.sun.star.chart.LineDiagram"), UNO_QUERY_THROW));
    Reference<css::beans::XPropertySet> diagram(cd->getDiagram(), UNO_QUERY_THROW);
    diagram->setPropertyValue("SymbolType", Any(sal_Int32(-2)));  // css::chart::ChartSymbolType::AUTO
    Reference<css::beans::XPropertySet> cdp(cd, UNO_QUERY_THROW);
    cdp->setPropertyValue("HasMainTitle", Any(true));
    cdp->setPropertyValue("HasLegend", Any(true));
    Reference<css::beans::XPropertySet>(cd->getTitle(), UNO_QUERY_THROW)->setPropertyValue("String", Any(ustr(ch.title)));
    diagram->setPropertyValue("HasXAxisTitle", Any(true));
    diagram->setPropertyValue("HasYAxisTitle", Any(true));
    Reference<css::chart::XAxisXSupplier> xs(diagram, UNO_QUERY);
    if (xs.is()) Reference<css::beans::XPropertySet>(xs->getXAxisTitle(), UNO_QUERY_THROW)->setPropertyValue("String", Any(ustr(ch.x_title)));
    Reference<css::chart::XAxisYSupplier> ys(diagram, UNO_QUERY);
    if (ys.is()) Reference<css::beans::XPropertySet>(ys->getYAxisTitle(), UNO_QUERY_THROW)->setPropertyValue("String", Any(ustr(ch.y_title)));
  }

  Reference<css::sheet::XSpreadsheetDocument> doc_;
  bool was_modified_ = false;
  std::vector<OUString> created_sheets_;
  std::vector<OUString> created_styles_;
  Reference<css::sheet::XSheetOperation> beside_;  // the score columns written beside the data
};

class AnalysisReport : public cppu::WeakImplHelper2<org::lode::calc::XAnalysisReport, css::lang::XServiceInfo> {
 public:
  explicit AnalysisReport(Reference<css::uno::XComponentContext> ctx) : ctx_(std::move(ctx)) {}

  OUString SAL_CALL run(const Reference<css::sheet::XSpreadsheetDocument>& doc, const css::table::CellRangeAddress& source,
                        const Sequence<css::beans::PropertyValue>& options) override {
    control_.begin_call();
    std::string outcome;
    bool ok = execute(doc, source, options, nullptr, outcome);
    control_.end_call(outcome);
    if (!ok) throw css::lang::IllegalArgumentException(ustr(outcome), static_cast<cppu::OWeakObject*>(this), 0);
    return ustr(outcome);
  }

  sal_Bool SAL_CALL start(const Reference<css::sheet::XSpreadsheetDocument>& doc, const css::table::CellRangeAddress& source,
                          const Sequence<css::beans::PropertyValue>& options,
                          const Reference<css::task::XStatusIndicator>& indicator) override {
    if (!control_.begin_background()) return false;
    rtl::Reference<AnalysisReport> self(this);
    std::thread([self, doc, source, options, indicator]() {
      std::string outcome;
      const bool ok = self->execute(doc, source, options, indicator, outcome);
      self->control_.end_background(outcome);
      // a run with a status indicator is the dialog's: a failure is shown to the person, not only kept
      const std::string message = ok || !indicator.is() ? std::string() : failed_run_message(outcome);
      if (!message.empty()) show_message(self->ctx_, frame_of(doc), true, "Lode: the analysis stopped", message);
    }).detach();  // it holds a reference to this service; nothing waits for it
    return true;
  }

  // Stops the run in progress (start's, or a run() on another thread), never a later one.
  void SAL_CALL cancel() override { control_.cancel(); }
  sal_Bool SAL_CALL isRunning() override { return control_.running(); }
  OUString SAL_CALL lastOutcome() override { return ustr(control_.last_outcome()); }

  Sequence<OUString> SAL_CALL describeColumns(const Reference<css::sheet::XSpreadsheetDocument>& doc,
                                              const css::table::CellRangeAddress& source, sal_Int32 header) override {
    try {
      SourceTable t = read_source(doc, source);
      const bool has_header = header == -1 ? detect_header(t) : header == 1;
      std::vector<OUString> out{OUString::createFromAscii(has_header ? "header" : "no header")};
      for (const Column& c : describe_columns(t, has_header)) out.push_back(ustr((c.numeric ? "+" : "-") + c.name));
      return Sequence<OUString>(out.data(), static_cast<sal_Int32>(out.size()));
    } catch (const std::exception& e) {
      throw css::lang::IllegalArgumentException(ustr(e.what()), static_cast<cppu::OWeakObject*>(this), 1);
    }
  }

  OUString SAL_CALL getImplementationName() override { return OUString(kImplementationName); }
  sal_Bool SAL_CALL supportsService(const OUString& name) override { return cppu::supportsService(this, name); }
  Sequence<OUString> SAL_CALL getSupportedServiceNames() override { return supported(); }
  static Sequence<OUString> supported() {
    OUString n(kServiceName);
    return Sequence<OUString>(&n, 1);
  }

 private:
  // One run; never throws. Returns true with the summary line, or false with "stopped: reason".
  bool execute(const Reference<css::sheet::XSpreadsheetDocument>& doc, const css::table::CellRangeAddress& source,
               const Sequence<css::beans::PropertyValue>& props, const Reference<css::task::XStatusIndicator>& indicator,
               std::string& outcome) noexcept {
    std::unique_ptr<Writer> writer;
    auto say = [&](const std::string& text, double share) {
      try {
        if (indicator.is()) {
          indicator->setText(ustr("Lode: " + text));
          indicator->setValue(static_cast<sal_Int32>(share * 100.0));
        }
      } catch (...) {
      }
    };
    try {
      if (indicator.is()) indicator->start("Lode: starting the analysis", 100);
      Options opts = options_from(props);
      opts.decimal_separator = decimal_separator_of(doc);
      SourceTable src = read_source(doc, source);
      Progress progress = [&](const std::string& phase, double share) {
        say(phase, 0.8 * share);
        return !control_.cancelled();
      };
      Report rep = build_report(src, opts, utc_now(), progress);

      writer = std::make_unique<Writer>(doc);
      Reference<css::frame::XModel> model(doc, UNO_QUERY);
      if (model.is()) model->lockControllers();
      struct Unlock {
        Reference<css::frame::XModel> m;
        ~Unlock() {
          try {
            if (m.is()) m->unlockControllers();
          } catch (...) {
          }
        }
      } unlock{model};
      writer->ensure_styles();
      // Names are decided up front so the overview can list them; each is checked again on insert.
      std::vector<std::string> bases;
      for (const Sheet& s : rep.sheets) bases.push_back(s.base_name);
      Reference<css::container::XNameAccess> names(doc->getSheets(), UNO_QUERY_THROW);
      const std::vector<std::string> unique =
          unique_sheet_names(bases, [&](const std::string& n) { return bool(names->hasByName(ustr(n))); });
      std::vector<std::pair<std::string, OUString>> renames;
      for (std::size_t i = 0; i < bases.size(); ++i) renames.emplace_back(bases[i], ustr(unique[i]));
      std::string where;
      int written = 0;
      if (rep.beside) {
        if (control_.cancelled() || opts.cancel_after_sheets == 0) throw Cancelled{};
        say("writing the factor scores", 0.8);
        writer->write_beside(source, *rep.beside);
        ++written;
      }
      for (std::size_t i = 0; i < rep.sheets.size(); ++i) {
        if (control_.cancelled() || (opts.cancel_after_sheets >= 0 && written >= opts.cancel_after_sheets)) throw Cancelled{};
        say("writing " + rep.sheets[i].base_name, 0.8 + 0.2 * static_cast<double>(i) / static_cast<double>(rep.sheets.size()));
        Sheet s = rep.sheets[i];
        s.base_name = utf8(renames[i].second);
        OUString name = writer->write_sheet(s, renames);
        where += (where.empty() ? "" : ", ") + utf8(name);
        ++written;
      }
      outcome = rep.summary + "; the report is on the sheets " + where + ".";
      if (indicator.is()) {  // a run from the dialog: show the overview and say where the report went
        indicator->end();
        show_first_sheet(model, renames.front().second);
      }
      return true;
    } catch (const css::uno::Exception& e) {
      outcome = "stopped: LibreOffice refused a step: " + utf8(e.Message);
    } catch (...) {
      outcome = stopped_outcome(std::current_exception());
    }
    if (writer) writer->rollback();
    try {
      if (indicator.is()) indicator->end();
    } catch (...) {
    }
    return false;
  }

  static void show_first_sheet(const Reference<css::frame::XModel>& model, const OUString& name) noexcept {
    try {
      Reference<css::sheet::XSpreadsheetView> view(model->getCurrentController(), UNO_QUERY);
      Reference<css::sheet::XSpreadsheetDocument> doc(model, UNO_QUERY);
      if (view.is() && doc.is())
        view->setActiveSheet(Reference<css::sheet::XSpreadsheet>(doc->getSheets()->getByName(name), UNO_QUERY_THROW));
    } catch (...) {
    }
  }

  // The decimal separator of the document's locale (its cells show numbers with it), '.' when unknown.
  char decimal_separator_of(const Reference<css::sheet::XSpreadsheetDocument>& doc) const noexcept {
    try {
      css::lang::Locale locale;
      Reference<css::beans::XPropertySet>(doc, UNO_QUERY_THROW)->getPropertyValue("CharLocale") >>= locale;
      if (locale.Language.isEmpty() || !ctx_.is()) return '.';
      const OUString sep = css::i18n::LocaleData2::create(ctx_)->getLocaleItem(locale).decimalSeparator;
      if (sep.getLength() == 1 && sep[0] < 0x80) return static_cast<char>(sep[0]);
    } catch (...) {
    }
    return '.';
  }

  static Reference<css::frame::XFrame> frame_of(const Reference<css::sheet::XSpreadsheetDocument>& doc) noexcept {
    try {
      Reference<css::frame::XModel> model(doc, UNO_QUERY);
      if (model.is() && model->getCurrentController().is()) return model->getCurrentController()->getFrame();
    } catch (...) {
    }
    return {};
  }

  Reference<css::uno::XComponentContext> ctx_;
  RunControl control_;
};

}  // namespace

Reference<css::uno::XInterface> SAL_CALL create_analysis_report(const Reference<css::uno::XComponentContext>& ctx) {
  return static_cast<cppu::OWeakObject*>(new AnalysisReport(ctx));
}
OUString SAL_CALL analysis_report_implementation_name() { return OUString(kImplementationName); }
Sequence<OUString> SAL_CALL analysis_report_service_names() { return AnalysisReport::supported(); }

}  // namespace lode::addin::report
