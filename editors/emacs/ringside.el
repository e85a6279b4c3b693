;;; ringside.el --- Major mode and eglot set-up for ringside .loop files  -*- lexical-binding: t; -*-

;; Version: 0.1.0
;; Package-Requires: ((emacs "27.1"))
;; Keywords: languages

;;; Commentary:

;; `loop-mode' edits .loop files (discrete-time controllers, plants and
;; feedback loops) with highlighting and `#' comments, and registers the
;; ringside language server (`ringside serve') with eglot.  Usage:
;;
;;   (add-to-list 'load-path "/path/to/editors/emacs")
;;   (require 'ringside)
;;   (add-hook 'loop-mode-hook #'ringside-eglot-ensure)   ; start the server automatically
;;
;; `ringside-eglot-ensure' loads eglot itself: from a clean `emacs -q' the
;; packages are not activated, so `eglot-ensure' is not yet defined there.
;; In a `loop-mode' buffer: C-c C-h hover, C-c C-a quick-fixes, C-c C-r
;; rename, M-n / M-p next / previous diagnostic, C-c C-p the loop plots
;; (`ringside-plot', which writes the page and opens it).
;;
;; Analysis options reach the server through `eglot-workspace-configuration',
;; for example in .dir-locals.el:
;;   ((loop-mode . ((eglot-workspace-configuration
;;                   . (:ringside (:trigger "change" :gainMarginDb 8))))))

;;; Code:

(require 'prog-mode)

(defgroup ringside nil
  "Editing .loop files checked by the ringside language server."
  :group 'languages
  :prefix "loop-")

(defconst loop-statement-keywords
  '("sample" "use" "gain" "block" "loop" "forward" "feedback" "sign" "require")
  "Words that start a statement of a .loop file.")

(defconst loop-modifier-keywords '("via" "min" "max" "prewarp" "vary" "to")
  "Words that qualify a statement.")

(defconst loop-methods '("zoh" "foh" "tustin" "matched")
  "Discretization methods named after `via'.")

(defconst loop-sign-values '("negative" "positive")
  "Values of `sign'.")

(defconst loop-metrics
  '("gain_margin" "phase_margin" "delay_margin" "radius" "damping"
    "peak_sensitivity" "overshoot" "settling" "disk_margin")
  "Metrics named in `require' lines.")

(defconst loop-number-regexp
  "\\_<-?\\(?:[0-9]+\\(?:\\.[0-9]*\\)?\\|\\.[0-9]+\\)\\(?:[eE][-+]?[0-9]+\\)?"
  "A number: 40, 0.97, -1.5e-3, .5.")

(defconst loop-font-lock-keywords
  `((,(concat "\\_<\\(block\\)\\s-+\\([A-Za-z_][A-Za-z0-9_]*\\)")
     (1 font-lock-keyword-face) (2 font-lock-type-face))
    (,(concat "\\_<\\(gain\\)\\s-+\\([A-Za-z_][A-Za-z0-9_]*\\)")
     (1 font-lock-keyword-face) (2 font-lock-variable-name-face))
    (,(concat "\\_<\\(loop\\)\\s-+\\([A-Za-z_][A-Za-z0-9_]*\\)")
     (1 font-lock-keyword-face) (2 font-lock-function-name-face))
    (,(regexp-opt loop-statement-keywords 'symbols) . font-lock-keyword-face)
    (,(regexp-opt loop-modifier-keywords 'symbols) . font-lock-keyword-face)
    (,(regexp-opt loop-methods 'symbols) . font-lock-builtin-face)
    (,(regexp-opt loop-sign-values 'symbols) . font-lock-constant-face)
    (,(regexp-opt loop-metrics 'symbols) . font-lock-builtin-face)
    ;; A unit needs a space after its number: inside expressions `9s' is 9 * s.
    (,(concat "[0-9.]\\s-+\\(rad/s\\|kHz\\|Hz\\|dB\\|deg\\|samples\\|ms\\|us\\|[µμ]s\\|s\\|%\\)\\_>")
     1 font-lock-type-face)
    ("[0-9.]\\s-+\\(%\\)" 1 font-lock-type-face)
    ;; The Laplace and z-transform variables, also right after a number (9s).
    ("\\(?:^\\|[^A-Za-z_]\\)\\([sz]\\)\\_>" 1 font-lock-constant-face)
    (,loop-number-regexp . font-lock-constant-face))
  "Highlighting of `loop-mode'.")

(defvar loop-mode-syntax-table
  (let ((table (make-syntax-table)))
    (modify-syntax-entry ?# "<" table)
    (modify-syntax-entry ?\n ">" table)
    (modify-syntax-entry ?\" "\"" table)
    (modify-syntax-entry ?\\ "\\" table)
    (modify-syntax-entry ?_ "_" table)
    (modify-syntax-entry ?\( "()" table)
    (modify-syntax-entry ?\) ")(" table)
    (modify-syntax-entry ?\{ "(}" table)
    (modify-syntax-entry ?\} "){" table)
    (dolist (c '(?+ ?- ?* ?/ ?^ ?= ?< ?> ?%))
      (modify-syntax-entry c "." table))
    table)
  "Syntax table of `loop-mode': `#' comments, \"strings\", ( ) and { }.")

(defcustom loop-indent-offset 2
  "Indentation of the statements inside a loop { ... } body."
  :type 'integer
  :safe #'integerp)

(defun loop-indent-line ()
  "Indent the current line by the depth of { } and ( ) around it."
  (interactive)
  (let* ((depth (save-excursion
                  (beginning-of-line)
                  (car (syntax-ppss))))
         (closing (save-excursion
                    (back-to-indentation)
                    (looking-at-p "[})]")))
         (column (* loop-indent-offset (max 0 (- depth (if closing 1 0))))))
    (if (<= (current-column) (current-indentation))
        (indent-line-to column)
      (save-excursion (indent-line-to column)))))

(defcustom ringside-open-function #'browse-url-of-file
  "Function called with the path of a written plot page to show it."
  :type 'function)

(declare-function eglot-ensure "eglot" ())
(declare-function eglot-current-server "eglot" ())
(declare-function eglot-code-actions "eglot" (beg &optional end action-kind interactive))
(declare-function eglot-rename "eglot" (newname))
(declare-function jsonrpc-request "jsonrpc" (connection method params &rest args))
(declare-function eglot--path-to-uri "eglot" (path))
(declare-function flymake-goto-next-error "flymake" (&optional n filter interactive))
(declare-function flymake-goto-prev-error "flymake" (&optional n filter interactive))

;;;###autoload
(defun ringside-eglot-ensure ()
  "Start the ringside language server for this buffer through eglot.
Loads eglot first: a clean `emacs -q' does not activate packages, so
`eglot-ensure' may not be defined yet (Emacs 28 with eglot from a package)."
  (if (require 'eglot nil t)
      (eglot-ensure)
    (message "ringside: eglot is not installed (built into Emacs 29; on Emacs 28 install the eglot package)")))

(defun ringside--server ()
  "The eglot server of this buffer, or an error saying how to start one."
  (or (and (require 'eglot nil t) (eglot-current-server))
      (user-error "No ringside server for this buffer; M-x eglot starts one")))

(defun ringside--uri (file)
  "The file: URI of FILE as eglot writes it."
  (if (fboundp 'eglot-path-to-uri)
      (funcall 'eglot-path-to-uri file)
    (funcall 'eglot--path-to-uri file)))

(defun ringside-plot (&optional loop)
  "Ask the server for the loop plots of this file, write the page, open it.
With LOOP (a name; interactively, a prefix argument asks for one), only
that loop.  The page goes to a temporary file, opened by
`ringside-open-function'; returns its path."
  (interactive (list (and current-prefix-arg (read-string "Loop: "))))
  (let* ((server (ringside--server))
         (arg (list :uri (ringside--uri buffer-file-name) :write :json-false))
         (result (jsonrpc-request server :workspace/executeCommand
                                  `(:command "ringside.plot"
                                    :arguments [,(if (and loop (not (string= loop "")))
                                                     (append arg (list :loop loop))
                                                   arg)])))
         (html (plist-get result :html)))
    (unless (and (stringp html) (> (length html) 0))
      (user-error "The server returned no plot page"))
    (let ((file (make-temp-file "ringside-" nil ".html" html)))
      (condition-case err
          (progn (funcall ringside-open-function file)
                 (message "ringside: loop plots written to %s" file))
        (error (message "ringside: loop plots written to %s (not opened: %s)"
                        file (error-message-string err))))
      file)))

(defun ringside-hover ()
  "Show the server's description of the block, loop or gain at point."
  (interactive)
  (ringside--server)
  (call-interactively (if (fboundp 'eldoc-doc-buffer) 'eldoc-doc-buffer 'eldoc)))

(defun ringside-code-actions ()
  "Offer the quick-fixes at point."
  (interactive)
  (ringside--server)
  (call-interactively #'eglot-code-actions))

(defun ringside-rename ()
  "Rename the gain, block or loop at point everywhere it is used."
  (interactive)
  (ringside--server)
  (call-interactively #'eglot-rename))

(defvar loop-mode-map
  (let ((map (make-sparse-keymap)))
    (define-key map (kbd "C-c C-h") #'ringside-hover)
    (define-key map (kbd "C-c C-a") #'ringside-code-actions)
    (define-key map (kbd "C-c C-r") #'ringside-rename)
    (define-key map (kbd "C-c C-p") #'ringside-plot)
    (define-key map (kbd "M-n") #'flymake-goto-next-error)
    (define-key map (kbd "M-p") #'flymake-goto-prev-error)
    map)
  "Keys of `loop-mode'.")

;;;###autoload
(define-derived-mode loop-mode prog-mode "Loop"
  "Major mode for ringside .loop files."
  :syntax-table loop-mode-syntax-table
  (setq-local comment-start "# ")
  (setq-local comment-start-skip "#+\\s-*")
  (setq-local comment-end "")
  (setq-local indent-line-function #'loop-indent-line)
  (setq-local font-lock-defaults '(loop-font-lock-keywords)))

;;;###autoload
(add-to-list 'auto-mode-alist '("\\.loop\\'" . loop-mode))

(with-eval-after-load 'eglot
  (defvar eglot-server-programs)
  (add-to-list 'eglot-server-programs '(loop-mode "ringside" "serve")))

(provide 'ringside)
;;; ringside.el ends here
