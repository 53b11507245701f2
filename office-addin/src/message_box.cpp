// The message box of message_box.hpp.
#include "message_box.hpp"

#include "uno_text.hpp"

#include <cppuhelper/implbase1.hxx>

#include <com/sun/star/awt/AsyncCallback.hpp>
#include <com/sun/star/awt/MessageBoxButtons.hpp>
#include <com/sun/star/awt/MessageBoxType.hpp>
#include <com/sun/star/awt/XCallback.hpp>
#include <com/sun/star/awt/XMessageBox.hpp>
#include <com/sun/star/awt/XMessageBoxFactory.hpp>
#include <com/sun/star/awt/XRequestCallback.hpp>
#include <com/sun/star/awt/XToolkit.hpp>
#include <com/sun/star/awt/XWindowPeer.hpp>
#include <com/sun/star/lang/XMultiComponentFactory.hpp>

namespace css = com::sun::star;
using css::uno::Any;
using css::uno::Reference;
using css::uno::UNO_QUERY;
using css::uno::UNO_QUERY_THROW;

namespace lode::addin::report {
namespace {

// Runs on the main thread: builds the box over the frame's window and waits for OK.
class ShowBox : public cppu::WeakImplHelper1<css::awt::XCallback> {
 public:
  ShowBox(Reference<css::uno::XComponentContext> ctx, Reference<css::awt::XWindowPeer> parent, bool error,
          rtl::OUString title, rtl::OUString text)
      : ctx_(std::move(ctx)), parent_(std::move(parent)), error_(error), title_(std::move(title)), text_(std::move(text)) {}

  void SAL_CALL notify(const Any&) override {
    try {
      Reference<css::awt::XMessageBoxFactory> factory(
          ctx_->getServiceManager()->createInstanceWithContext("com.sun.star.awt.Toolkit", ctx_), UNO_QUERY_THROW);
      Reference<css::awt::XMessageBox> box = factory->createMessageBox(
          parent_, error_ ? css::awt::MessageBoxType_ERRORBOX : css::awt::MessageBoxType_INFOBOX,
          css::awt::MessageBoxButtons::BUTTONS_OK, title_, text_);
      if (box.is()) box->execute();
    } catch (...) {
    }
  }

 private:
  Reference<css::uno::XComponentContext> ctx_;
  Reference<css::awt::XWindowPeer> parent_;
  bool error_;
  rtl::OUString title_, text_;
};

}  // namespace

void show_message(const Reference<css::uno::XComponentContext>& ctx, const Reference<css::frame::XFrame>& frame,
                  bool error, const std::string& title, const std::string& text) noexcept {
  try {
    if (!ctx.is()) return;
    Reference<css::awt::XWindowPeer> parent;
    if (frame.is()) parent.set(frame->getContainerWindow(), UNO_QUERY);
    Reference<css::awt::XRequestCallback> async = css::awt::AsyncCallback::create(ctx);
    async->addCallback(new ShowBox(ctx, parent, error, ustr(title), ustr(text)), Any());
  } catch (...) {
  }
}

}  // namespace lode::addin::report
