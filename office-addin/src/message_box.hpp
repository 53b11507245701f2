// A message box in the office's own UI, for what a dialog run has to tell the person (a run that
// failed and why, a run already going, a range that cannot be read). Thin UNO glue: the words come
// from the report's UNO-free code.
#pragma once

#include <com/sun/star/frame/XFrame.hpp>
#include <com/sun/star/uno/Reference.hxx>
#include <com/sun/star/uno/XComponentContext.hpp>

#include <string>

namespace lode::addin::report {

// Shows `text` under `title` in a message box over `frame`'s window (css::awt::MessageBoxType:
// ERRORBOX when `error`, else INFOBOX). Posted to the office's main thread through
// com.sun.star.awt.AsyncCallback, so a background run may call it; never throws.
void show_message(const com::sun::star::uno::Reference<com::sun::star::uno::XComponentContext>& ctx,
                  const com::sun::star::uno::Reference<com::sun::star::frame::XFrame>& frame, bool error,
                  const std::string& title, const std::string& text) noexcept;

}  // namespace lode::addin::report
