;;; knowable.el --- `knowable lsp' in Emacs through eglot  -*- lexical-binding: t -*-

;; Put this file on your `load-path' and add to your init file:
;;
;;   (require 'knowable)
;;
;; Schemas (*.knowable.yaml) and the registers they include (YAML files
;; under a register/ folder; see `knowable-files') open in `knowable-mode'
;; (YAML's mode when yaml-mode is installed, plain text otherwise), and
;; eglot starts `knowable lsp' for them: one server per project, so that an
;; unsaved register is seen by the schemas that include it.  Findings show
;; through Flymake as "knowable [RULE]: message".  Needs eglot (built into
;; Emacs 29; Debian's elpa-eglot for Emacs 28).  tests/editors/eglot_test.el
;; loads this file.

;;; Code:

(require 'eglot)

(defgroup knowable nil
  "Schemas checked by knowable while you write them."
  :group 'tools)

(defcustom knowable-command '("knowable" "lsp")
  "The server's command line; add \"--rulebook\" F or \"--root\" D if check needs them."
  :type '(repeat string))

(defcustom knowable-files '("\\.knowable\\.yaml\\'" "/register/[^/]*\\.ya?ml\\'")
  "Regular expressions of the files knowable serves: schemas and registers."
  :type '(repeat regexp))

(defmacro knowable--define-mode (parent)
  `(define-derived-mode knowable-mode ,parent "Knowable"
     "A mode for knowable schemas and registers, served by `knowable lsp'."
     (setq-local comment-start "# ")
     (setq-local comment-start-skip "#+\\s-*")))

(if (require 'yaml-mode nil t)
    (knowable--define-mode yaml-mode)
  (knowable--define-mode text-mode))

(dolist (re knowable-files)
  (add-to-list 'auto-mode-alist (cons re 'knowable-mode)))

;; A function, so that a later change of `knowable-command' is used.
(add-to-list 'eglot-server-programs
             `((knowable-mode :language-id "yaml") . ,(lambda (&rest _) knowable-command)))
(add-hook 'knowable-mode-hook #'eglot-ensure)

(provide 'knowable)
;;; knowable.el ends here
